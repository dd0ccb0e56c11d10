//! Job ids: 32 lowercase hex digits (128 random bits from the operating system's
//! generator). An id is the only request-supplied text ever used in a file path, and
//! only after [`JobId::parse`] has checked its format.

use std::fmt;

/// Number of hex digits in a job id.
const ID_LEN: usize = 32;

/// A validated job id. Constructed only by [`JobId::generate`] or [`JobId::parse`], so
/// every value is exactly 32 characters from `0-9a-f` and safe as a folder name.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub struct JobId(String);

impl JobId {
    /// A fresh random id.
    pub fn generate() -> JobId {
        let bits: u128 = rand::random();
        JobId(format!("{bits:032x}"))
    }

    /// Accepts `text` only when it is 32 lowercase hex digits.
    pub fn parse(text: &str) -> Option<JobId> {
        let ok = text.len() == ID_LEN
            && text
                .bytes()
                .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b));
        ok.then(|| JobId(text.to_owned()))
    }

    /// The id as text.
    pub fn as_str(&self) -> &str {
        &self.0
    }
}

impl fmt::Display for JobId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn generated_ids_parse_and_differ() {
        let a = JobId::generate();
        let b = JobId::generate();
        assert_eq!(a.as_str().len(), 32);
        assert_eq!(JobId::parse(a.as_str()), Some(a.clone()));
        assert_ne!(a, b);
    }

    #[test]
    fn path_like_and_malformed_ids_are_rejected() {
        for bad in [
            "",
            "..",
            "../../etc/passwd",
            "0123456789abcdef0123456789abcde",
            "0123456789abcdef0123456789abcdef0",
            "0123456789ABCDEF0123456789ABCDEF",
            "0123456789abcdef/123456789abcdef",
            "0123456789abcdef0123456789abcdeg",
        ] {
            assert_eq!(JobId::parse(bad), None, "{bad:?}");
        }
    }
}
