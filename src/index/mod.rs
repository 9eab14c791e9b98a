//! Refractive-index models. Wavelengths are in micrometres (`wavelength_um`) inside this module,
//! because Sellmeier and Cauchy coefficients are published in µm² and µm⁴.

pub mod library;

use schemars::JsonSchema;
use serde::{Deserialize, Serialize};

use crate::error::{show, FieldError};
use crate::limits::REFRACTIVE_INDEX;

/// Index of standard air (15 °C, 101 325 Pa, 450 ppm CO₂) at a vacuum wavelength.
///
/// n − 1 = 0.05792105 / (238.0185 − σ²) + 0.00167917 / (57.362 − σ²), σ = 1/λ in µm⁻¹
/// (P. E. Ciddor, Appl. Opt. 35, 1566 (1996), eq. 1). Used to convert vacuum-referenced data to
/// the relative-to-air basis used everywhere else in tirtrace.
pub fn n_standard_air(wavelength_um: f64) -> f64 {
    let s2 = 1.0 / (wavelength_um * wavelength_um);
    1.0 + 0.05792105 / (238.0185 - s2) + 0.00167917 / (57.362 - s2)
}

/// A dispersion model: n as a function of wavelength.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(tag = "model", rename_all = "snake_case", deny_unknown_fields)]
pub enum IndexModel {
    /// A wavelength-independent index.
    Constant {
        /// The refractive index, relative to air.
        #[schemars(transform = crate::schema::within(REFRACTIVE_INDEX))]
        n: f64,
    },
    /// Sellmeier: n² − 1 = Σ Bᵢ λ² / (λ² − Cᵢ), λ in µm, Cᵢ in µm².
    Sellmeier {
        /// Dimensionless oscillator strengths Bᵢ, 1 to 6 terms.
        #[schemars(length(min = 1, max = 6))]
        b: Vec<f64>,
        /// Resonance terms Cᵢ in µm², as many as `b`.
        #[schemars(length(min = 1, max = 6))]
        c_um2: Vec<f64>,
    },
    /// Sellmeier with resonance wavelengths: n² − 1 = Σ Bᵢ λ² / (λ² − λᵢ²), λ and λᵢ in µm (the
    /// form Malitson published; Cᵢ = λᵢ² gives the form above).
    SellmeierWavelengths {
        /// Dimensionless oscillator strengths Bᵢ, 1 to 6 terms.
        #[schemars(length(min = 1, max = 6))]
        b: Vec<f64>,
        /// Resonance wavelengths λᵢ in µm, as many as `b`.
        #[schemars(length(min = 1, max = 6))]
        lambda_um: Vec<f64>,
    },
    /// Polynomial form of G. Beadie et al., Appl. Opt. 54, F139 (2015):
    /// n² = A0 + A1λ² + A2λ⁴ + A3λ⁻² + A4λ⁻⁴ + A5λ⁻⁶ + A6λ⁻⁸, λ in µm.
    BeadiePolynomial {
        /// Coefficients A0…A6.
        a: [f64; 7],
    },
    /// Cauchy: n = A + B/λ² + C/λ⁴, λ in µm.
    Cauchy {
        /// Constant term A.
        a: f64,
        /// B in µm².
        b_um2: f64,
        /// C in µm⁴.
        c_um4: f64,
    },
}

/// √(n²) where n² > 0, else NaN (no real index; validation keeps callers away from it).
fn sqrt_or_nan(n2: f64) -> f64 {
    if n2 > 0.0 {
        n2.sqrt()
    } else {
        f64::NAN
    }
}

impl IndexModel {
    /// Refractive index at `wavelength_um` on the model's own basis. Returns NaN where the model
    /// has no real index (n² ≤ 0 or a Sellmeier pole); [`IndexModel::validate`] and the
    /// material's validity range keep callers away from those points.
    pub fn n(&self, wavelength_um: f64) -> f64 {
        let l2 = wavelength_um * wavelength_um;
        match self {
            IndexModel::Constant { n } => *n,
            // n² − 1 = Σ Bᵢ λ² / (λ² − Cᵢ)
            IndexModel::Sellmeier { b, c_um2 } => sqrt_or_nan(
                1.0 + b
                    .iter()
                    .zip(c_um2)
                    .map(|(bi, ci)| bi * l2 / (l2 - ci))
                    .sum::<f64>(),
            ),
            // n² − 1 = Σ Bᵢ λ² / (λ² − λᵢ²)
            IndexModel::SellmeierWavelengths { b, lambda_um } => sqrt_or_nan(
                1.0 + b
                    .iter()
                    .zip(lambda_um)
                    .map(|(bi, li)| bi * l2 / (l2 - li * li))
                    .sum::<f64>(),
            ),
            IndexModel::BeadiePolynomial { a } => {
                let inv = 1.0 / l2;
                sqrt_or_nan(
                    a[0] + a[1] * l2
                        + a[2] * l2 * l2
                        + inv * (a[3] + inv * (a[4] + inv * (a[5] + inv * a[6]))),
                )
            }
            IndexModel::Cauchy { a, b_um2, c_um4 } => a + b_um2 / l2 + c_um4 / (l2 * l2),
        }
    }

    /// Check the coefficients themselves (finite, matching lengths, a physical constant index).
    /// `path` is the JSON path of this model in the document, for the messages.
    pub fn validate(&self, path: &str) -> Result<(), FieldError> {
        let finite = |name: &str, xs: &[f64]| -> Result<(), FieldError> {
            match xs.iter().position(|x| !x.is_finite()) {
                Some(i) => Err(FieldError::new(
                    format!("{path}.{name}[{i}]"),
                    format!("must be a finite number, got {}", show(xs[i])),
                )),
                None => Ok(()),
            }
        };
        // Paired Sellmeier terms: 1 to 6 of each, as many of one as of the other, all finite.
        let terms = |other: &str, b: &[f64], c: &[f64]| -> Result<(), FieldError> {
            if b.is_empty() || b.len() > 6 || b.len() != c.len() {
                return Err(FieldError::new(
                    format!("{path}.b"),
                    format!(
                        "needs 1 to 6 terms and as many {other} terms, got {} and {}",
                        b.len(),
                        c.len()
                    ),
                ));
            }
            finite("b", b)?;
            finite(other, c)
        };
        match self {
            IndexModel::Constant { n } => {
                REFRACTIVE_INDEX.check(&format!("{path}.n"), *n)?;
            }
            IndexModel::Sellmeier { b, c_um2 } => terms("c_um2", b, c_um2)?,
            IndexModel::SellmeierWavelengths { b, lambda_um } => terms("lambda_um", b, lambda_um)?,
            IndexModel::BeadiePolynomial { a } => finite("a", a)?,
            IndexModel::Cauchy { a, b_um2, c_um4 } => {
                for (name, x) in [("a", a), ("b_um2", b_um2), ("c_um4", c_um4)] {
                    if !x.is_finite() {
                        return Err(FieldError::new(
                            format!("{path}.{name}"),
                            format!("must be a finite number, got {}", show(*x)),
                        ));
                    }
                }
            }
        }
        Ok(())
    }
}
