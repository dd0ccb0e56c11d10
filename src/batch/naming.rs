//! Output names: each input `<stem>.obj` becomes `DIR/<name>.{obj,report.json,atlas.png}`.
//!
//! Rule (deterministic, compared ignoring case so that case-insensitive file
//! systems cannot merge two outputs):
//! 1. `<stem>` when no other input has that stem;
//! 2. otherwise every input sharing the stem becomes `<parent>_<stem>`, `<parent>`
//!    being the name of the folder holding it;
//! 3. a name still taken by an earlier input (in input order) gets the first free
//!    suffix `-2`, `-3`, … that no other input uses.

use std::collections::{HashMap, HashSet};
use std::path::Path;

/// Output names for `inputs`, in the same order.
///
/// `inputs`: absolute input paths, in input order. Returns one name per input,
/// without extension.
pub fn output_names(inputs: &[&Path]) -> Vec<String> {
    let key = |s: &str| s.to_lowercase();
    let stems: Vec<String> = inputs
        .iter()
        .map(|p| {
            p.file_stem()
                .unwrap_or_default()
                .to_string_lossy()
                .into_owned()
        })
        .collect();
    let mut stem_count: HashMap<String, usize> = HashMap::new();
    for s in &stems {
        *stem_count.entry(key(s)).or_default() += 1;
    }
    let bases: Vec<String> = inputs
        .iter()
        .zip(&stems)
        .map(|(path, stem)| {
            let parent = path.parent().and_then(Path::file_name);
            match parent {
                Some(parent) if stem_count[&key(stem)] > 1 => {
                    format!("{}_{stem}", parent.to_string_lossy())
                }
                _ => stem.clone(),
            }
        })
        .collect();
    let mut pending: HashMap<String, usize> = HashMap::new();
    for b in &bases {
        *pending.entry(key(b)).or_default() += 1;
    }
    let mut taken: HashSet<String> = HashSet::new();
    bases
        .iter()
        .map(|base| {
            if let Some(n) = pending.get_mut(&key(base)) {
                *n -= 1;
            }
            let mut name = base.clone();
            let mut k = 2;
            while taken.contains(&key(&name))
                || (name != *base && pending.get(&key(&name)).is_some_and(|&n| n > 0))
            {
                name = format!("{base}-{k}");
                k += 1;
            }
            taken.insert(key(&name));
            name
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn names(paths: &[&str]) -> Vec<String> {
        let paths: Vec<&Path> = paths.iter().map(Path::new).collect();
        output_names(&paths)
    }

    #[test]
    fn unique_stems_stay_and_clashes_take_the_parent_then_a_suffix() {
        assert_eq!(
            names(&[
                "/m/a/spot.obj",
                "/m/b/cow.obj",
                "/m/b/Spot.obj",
                "/n/a/spot.obj"
            ]),
            ["a_spot", "cow", "b_Spot", "a_spot-2"]
        );
    }

    #[test]
    fn a_suffix_never_takes_a_name_another_input_will_want() {
        // "x_m-2" is a plain stem of the third input, so the clash skips to -3.
        assert_eq!(
            names(&["/p/x/m.obj", "/q/x/m.obj", "/r/x_m-2.obj", "/s/x_m.obj"]),
            ["x_m", "x_m-3", "x_m-2", "x_m-4"]
        );
    }

    #[test]
    fn the_same_file_twice_gets_two_names() {
        assert_eq!(names(&["/d/m.obj", "/d/m.obj"]), ["d_m", "d_m-2"]);
    }
}
