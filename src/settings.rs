//! Job settings shared by the command line, batch manifests and the HTTP service.
//!
//! Every option has the command line's name (kebab-case) and default; the report
//! echoes the whole struct under `settings`.

use serde::{Deserialize, Serialize};
use std::fmt;
use std::str::FromStr;

macro_rules! named_enum {
    ($(#[$meta:meta])* $name:ident { $($(#[$vmeta:meta])* $variant:ident => $text:literal),+ $(,)? }) => {
        $(#[$meta])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
        pub enum $name {
            $($(#[$vmeta])* #[serde(rename = $text)] $variant),+
        }

        impl $name {
            /// Every value, in the order `--help` lists them.
            pub const ALL: &'static [$name] = &[$($name::$variant),+];

            /// The name used on the command line, in reports and over HTTP.
            pub fn as_str(self) -> &'static str {
                match self { $($name::$variant => $text),+ }
            }
        }

        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str(self.as_str())
            }
        }

        impl FromStr for $name {
            type Err = String;
            fn from_str(s: &str) -> Result<Self, String> {
                match s {
                    $($text => Ok($name::$variant),)+
                    _ => Err(format!(
                        "'{s}' is not one of: {}",
                        [$($text),+].join(", ")
                    )),
                }
            }
        }
    };
}

named_enum! {
    /// Distortion energy minimised per face.
    EnergyKind {
        /// As-rigid-as-possible (Liu et al. 2008).
        Arap => "arap",
        /// Symmetric Dirichlet, a flip-preventing isometric energy (Smith & Schaefer 2015).
        SymmetricDirichlet => "symmetric-dirichlet",
        /// Least-squares conformal (Lévy et al. 2002).
        Conformal => "conformal",
    }
}

named_enum! {
    /// Which optimiser minimises the energy.
    SolverKind {
        /// The fastest method for the chosen energy.
        Auto => "auto",
        /// Projected Newton with sparse Cholesky.
        Newton => "newton",
        /// Limited-memory BFGS.
        Lbfgs => "lbfgs",
        /// Local–global alternation (ARAP only).
        LocalGlobal => "local-global",
        /// Limited-memory BFGS whose initial inverse Hessian is the factored Laplacian.
        LaplacianLbfgs => "laplacian-lbfgs",
    }
}

named_enum! {
    /// Where charts come from.
    SeamMode {
        /// Use the input's own UV islands.
        Keep => "keep",
        /// Let polyflat choose the seams.
        Auto => "auto",
    }
}

named_enum! {
    /// Which per-face metric the distortion atlas shows.
    AtlasMetric {
        /// Angle distortion `σ1/σ2`.
        Angle => "angle",
        /// Area distortion `ln(σ1'σ2')`.
        Area => "area",
        /// L2 stretch.
        Stretch => "stretch",
    }
}

/// Every option of a flattening job.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, rename_all = "snake_case")]
pub struct Settings {
    /// Distortion energy.
    pub energy: EnergyKind,
    /// Optimiser.
    pub solver: SolverKind,
    /// Weight λ of the projection penalty on the gradient's null space.
    pub projection_weight: f64,
    /// Seam mode; `None` means `keep` when the input has UVs and `auto` otherwise.
    pub seams: Option<SeamMode>,
    /// Texture size in texels (square) used for padding.
    pub resolution: u32,
    /// Texels between charts and from the border.
    pub padding: u32,
    /// Iteration cap per chart.
    pub max_iterations: usize,
    /// Relative energy decrease below which the solver stops.
    pub tolerance: f64,
    /// Charts cut automatically are split again when their L2 stretch exceeds this.
    pub max_stretch: f64,
    /// Worker threads for per-face loops (`None`: all cores).
    pub threads: Option<usize>,
    /// Metric shown in the distortion atlas.
    pub atlas_metric: AtlasMetric,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            energy: EnergyKind::SymmetricDirichlet,
            solver: SolverKind::Auto,
            projection_weight: 1.0,
            seams: None,
            resolution: 1024,
            padding: 4,
            max_iterations: 200,
            tolerance: 1e-9,
            max_stretch: 1.25,
            threads: None,
            atlas_metric: AtlasMetric::Angle,
        }
    }
}

impl Settings {
    /// Checks value ranges; the error names the option.
    pub fn validate(&self) -> Result<(), String> {
        if !(self.projection_weight.is_finite() && self.projection_weight >= 0.0) {
            return Err(format!(
                "--projection-weight must be a finite number ≥ 0, got {}",
                self.projection_weight
            ));
        }
        if !(16..=65536).contains(&self.resolution) {
            return Err(format!(
                "--resolution must be between 16 and 65536 texels, got {}",
                self.resolution
            ));
        }
        if u64::from(self.padding) * 4 >= u64::from(self.resolution) {
            return Err(format!(
                "--padding {} leaves no room in a {}-texel texture",
                self.padding, self.resolution
            ));
        }
        if self.max_iterations == 0 {
            return Err("--max-iterations must be at least 1".into());
        }
        if !(self.tolerance.is_finite() && self.tolerance >= 0.0) {
            return Err(format!(
                "--tolerance must be a finite number ≥ 0, got {}",
                self.tolerance
            ));
        }
        if !(self.max_stretch.is_finite() && self.max_stretch >= 1.0) {
            return Err(format!(
                "--max-stretch must be a number ≥ 1, got {}",
                self.max_stretch
            ));
        }
        if self.threads == Some(0) {
            return Err("--threads must be at least 1".into());
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip() {
        for e in EnergyKind::ALL {
            assert_eq!(e.as_str().parse::<EnergyKind>().unwrap(), *e);
        }
        for s in SolverKind::ALL {
            assert_eq!(s.as_str().parse::<SolverKind>().unwrap(), *s);
        }
        assert!("cotan".parse::<EnergyKind>().unwrap_err().contains("arap"));
    }

    #[test]
    fn defaults_are_valid_and_bad_values_name_the_option() {
        assert!(Settings::default().validate().is_ok());
        let s = Settings {
            padding: 300,
            ..Settings::default()
        };
        assert!(s.validate().unwrap_err().contains("--padding"));
    }
}
