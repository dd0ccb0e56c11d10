//! The flattening options shared by `polyflat flatten` and `polyflat batch`
//! (`#[command(flatten)]` them), and the option names a batch manifest accepts.
//!
//! Every field is `None` unless given, so options can be layered: defaults, then
//! the command line, then a manifest entry's overrides ([`FlattenOptions::apply`]).

use crate::settings::{AtlasMetric, EnergyKind, SeamMode, Settings, SolverKind};
use crate::Error;
use clap::builder::{PossibleValuesParser, TypedValueParser};
use clap::{Args, CommandFactory};
use std::str::FromStr;

/// Options of one flattening job; `None` keeps the value underneath.
#[derive(Debug, Clone, Default, PartialEq, Args)]
pub struct FlattenOptions {
    /// Distortion energy to minimise [default: symmetric-dirichlet].
    #[arg(long, value_name = "ENERGY", value_parser = named::<EnergyKind>(EnergyKind::ALL.iter().map(|v| v.as_str())))]
    pub energy: Option<EnergyKind>,
    /// Optimiser: auto (a solver with cheap iterations, local–global for arap and
    /// laplacian-lbfgs for symmetric-dirichlet, handing slow charts over to Newton;
    /// Newton for conformal), newton, lbfgs, laplacian-lbfgs (L-BFGS started from the
    /// factored Laplacian), or local-global (arap only) [default: auto].
    #[arg(long, value_name = "SOLVER", value_parser = named::<SolverKind>(SolverKind::ALL.iter().map(|v| v.as_str())))]
    pub solver: Option<SolverKind>,
    /// Weight of the penalty on the polygon gradient's null space [default: 1].
    #[arg(long, value_name = "F")]
    pub projection_weight: Option<f64>,
    /// Where charts come from [default: keep when the input has UVs, else auto].
    #[arg(long, value_name = "MODE", value_parser = named::<SeamMode>(SeamMode::ALL.iter().map(|v| v.as_str())))]
    pub seams: Option<SeamMode>,
    /// Texture size in texels (square), used for padding and the atlas [default: 1024].
    #[arg(long, value_name = "PX")]
    pub resolution: Option<u32>,
    /// Texels between charts and from the border [default: 4].
    #[arg(long, value_name = "PX")]
    pub padding: Option<u32>,
    /// Iteration cap per chart [default: 200].
    #[arg(long, value_name = "N")]
    pub max_iterations: Option<usize>,
    /// Relative energy decrease below which the solver stops [default: 1e-9].
    #[arg(long, value_name = "F")]
    pub tolerance: Option<f64>,
    /// Automatically cut charts are split again above this L2 stretch [default: 1.25].
    #[arg(long, value_name = "F")]
    pub max_stretch: Option<f64>,
    /// Metric the distortion atlas shows [default: angle].
    #[arg(long, value_name = "METRIC", value_parser = named::<AtlasMetric>(AtlasMetric::ALL.iter().map(|v| v.as_str())))]
    pub atlas_metric: Option<AtlasMetric>,
    /// Worker threads for per-face loops [default: all cores].
    #[arg(long, value_name = "N")]
    pub threads: Option<usize>,
}

/// Parses one of the fixed names of a settings enum, listing them in `--help`.
pub(crate) fn named<T>(
    names: impl Iterator<Item = &'static str>,
) -> impl TypedValueParser<Value = T>
where
    T: FromStr<Err = String> + Clone + Send + Sync + 'static,
{
    PossibleValuesParser::new(names.collect::<Vec<_>>()).try_map(|s| s.parse::<T>())
}

/// `clap` needs a parser type to list the option names of [`FlattenOptions`].
#[derive(Debug, clap::Parser)]
#[command(name = "options", no_binary_name = true, color = clap::ColorChoice::Never)]
struct OptionsOnly {
    #[command(flatten)]
    options: FlattenOptions,
}

impl FlattenOptions {
    /// Writes every given option into `settings`, leaving the others as they are.
    pub fn apply(&self, settings: &mut Settings) {
        let s = settings;
        macro_rules! set {
            ($($field:ident),*) => { $(if let Some(v) = self.$field { s.$field = v; })* };
        }
        set!(
            energy,
            solver,
            projection_weight,
            resolution,
            padding,
            max_iterations,
            tolerance,
            max_stretch,
            atlas_metric
        );
        if self.seams.is_some() {
            s.seams = self.seams;
        }
        if self.threads.is_some() {
            s.threads = self.threads;
        }
    }

    /// The defaults with these options applied, checked; the error names the option.
    pub fn to_settings(&self) -> Result<Settings, Error> {
        let mut settings = Settings::default();
        self.apply(&mut settings);
        settings.validate().map_err(Error::Settings)?;
        Ok(settings)
    }

    /// The long names of every option (`energy`, `projection-weight`, …), as the
    /// command line and batch manifests spell them.
    pub fn names() -> Vec<String> {
        OptionsOnly::command()
            .get_arguments()
            .filter_map(|a| a.get_long().map(str::to_owned))
            .collect()
    }

    /// Parses `--NAME VALUE` pairs exactly as the command line would.
    ///
    /// The error is one sentence naming the option and what it accepts.
    pub fn parse_pairs<'a>(
        pairs: impl IntoIterator<Item = (&'a str, &'a str)>,
    ) -> Result<FlattenOptions, String> {
        let args: Vec<String> = pairs
            .into_iter()
            .map(|(name, value)| format!("--{name}={value}"))
            .collect();
        match OptionsOnly::command().try_get_matches_from(args) {
            Ok(matches) => <OptionsOnly as clap::FromArgMatches>::from_arg_matches(&matches)
                .map(|o| o.options)
                .map_err(|e| first_line(&e)),
            Err(e) => Err(first_line(&e)),
        }
    }
}

/// A clap error as one sentence: its first line without the `error: ` prefix,
/// plus the accepted values when clap lists them.
fn first_line(e: &clap::Error) -> String {
    use clap::error::{ContextKind, ContextValue};
    let text = e.to_string();
    let line = text.lines().next().unwrap_or_default();
    let line = line.strip_prefix("error: ").unwrap_or(line);
    match e.get(ContextKind::ValidValue) {
        Some(ContextValue::Strings(valid)) => format!("{line}; use one of: {}", valid.join(", ")),
        _ => line.to_owned(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_the_command_line_spelling() {
        let names = FlattenOptions::names();
        assert_eq!(names.len(), 11);
        for n in [
            "energy",
            "projection-weight",
            "max-iterations",
            "atlas-metric",
        ] {
            assert!(names.iter().any(|x| x == n), "{n} missing from {names:?}");
        }
    }

    #[test]
    fn pairs_parse_like_the_command_line_and_layer_over_settings() {
        let o =
            FlattenOptions::parse_pairs([("energy", "arap"), ("padding", "9"), ("seams", "auto")])
                .unwrap();
        let mut s = Settings::default();
        o.apply(&mut s);
        assert_eq!(s.energy, EnergyKind::Arap);
        assert_eq!(s.padding, 9);
        assert_eq!(s.seams, Some(SeamMode::Auto));
        assert_eq!(s.resolution, Settings::default().resolution);
    }

    #[test]
    fn bad_values_name_the_option_and_the_choices() {
        let e = FlattenOptions::parse_pairs([("energy", "cotan")]).unwrap_err();
        assert_eq!(
            e,
            "invalid value 'cotan' for '--energy <ENERGY>'; \
             use one of: arap, symmetric-dirichlet, conformal"
        );
        let e = FlattenOptions::parse_pairs([("padding", "-3")]).unwrap_err();
        assert!(
            e.starts_with("invalid value '-3' for '--padding <PX>'"),
            "{e}"
        );
        let e = FlattenOptions {
            padding: Some(600),
            ..FlattenOptions::default()
        }
        .to_settings()
        .unwrap_err()
        .to_string();
        assert!(e.contains("--padding"), "{e}");
    }
}
