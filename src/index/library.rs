//! Built-in materials. Each entry carries its published source, the wavelength range its data
//! cover and the basis (relative to air or to vacuum) of its coefficients. Outside the range a
//! lookup is an error naming the range: no silent extrapolation.

use schemars::JsonSchema;
use serde::{Deserialize, Serialize};

use super::{n_standard_air, IndexModel};
use crate::error::{show, FieldError};
use crate::limits::REFRACTIVE_INDEX;

/// What a material's published index is measured against.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum IndexBasis {
    /// Relative to air (the usual refractometer reading).
    Air,
    /// Absolute, relative to vacuum.
    Vacuum,
}

/// One entry of the material library.
#[derive(Debug, Clone, Serialize)]
pub struct Material {
    /// Stable identifier used in documents, e.g. `pmma`.
    pub id: &'static str,
    /// Name shown to users.
    pub name: &'static str,
    /// The dispersion model with the published coefficients.
    #[serde(skip)]
    pub model: IndexModel,
    /// Shortest wavelength the data cover, nm.
    pub min_nm: f64,
    /// Longest wavelength the data cover, nm.
    pub max_nm: f64,
    /// Basis of the published coefficients.
    pub basis: IndexBasis,
    /// Published source of the coefficients.
    pub source: &'static str,
    /// Caveats (temperature, accuracy).
    pub note: &'static str,
    /// A typical bulk attenuation in the visible, dB/m: absorption and scattering of a clear
    /// grade (a moulded part may lose more). The design page fills the pipe's attenuation with it
    /// when the material is chosen, unless the designer typed their own value.
    pub attenuation_db_per_m: f64,
    /// Where that figure comes from; `from memory` when it was not checked in a source
    /// (docs/REFERENCES.md §8).
    pub attenuation_source: &'static str,
}

/// A polymer measured by N. Sultanova et al. (2009), whose table covers 437–1052 nm relative to
/// air: the one Sellmeier term (`b`, and `c_um2` in µm²) fitted to it, and its typical
/// attenuation (dB/m) with where that figure comes from.
fn fitted_polymer(
    id: &'static str,
    name: &'static str,
    b: f64,
    c_um2: f64,
    attenuation: (f64, &'static str),
) -> Material {
    Material {
        id,
        name,
        model: IndexModel::Sellmeier {
            b: vec![b],
            c_um2: vec![c_um2],
        },
        min_nm: 437.0,
        max_nm: 1052.0,
        basis: IndexBasis::Air,
        source: "N. Sultanova, S. Kasarova, I. Nikolov, Acta Phys. Pol. A 116, 585 (2009); one-term Sellmeier fit to their table",
        note: "fit good to about 1e-3 in n; not for dispersion (Abbe number) work",
        attenuation_db_per_m: attenuation.0,
        attenuation_source: attenuation.1,
    }
}

/// The built-in materials, in the order the page lists them.
pub fn materials() -> Vec<Material> {
    vec![
        Material {
            id: "air",
            name: "Air",
            model: IndexModel::Constant { n: 1.0 },
            min_nm: 200.0,
            max_nm: 2500.0,
            basis: IndexBasis::Air,
            source: "relative to air by definition",
            note: "all indices in tirtrace are relative to air",
            attenuation_db_per_m: 0.0,
            attenuation_source: "from memory: clear air absorbs and scatters far less than 0.001 dB/m in the visible, nothing over a light pipe's length",
        },
        Material {
            id: "water",
            name: "Water (20 °C)",
            model: IndexModel::Sellmeier {
                b: vec![
                    5.684027565e-1,
                    1.726177391e-1,
                    2.086189578e-2,
                    1.130748688e-1,
                ],
                c_um2: vec![
                    5.101829712e-3,
                    1.821153936e-2,
                    2.620722293e-2,
                    1.069792721e1,
                ],
            },
            min_nm: 182.0,
            max_nm: 1129.0,
            basis: IndexBasis::Vacuum,
            source: "M. Daimon, A. Masumura, Appl. Opt. 46, 3811 (2007)",
            note: "20.0 °C; absolute data, converted to relative to air",
            attenuation_db_per_m: 0.25,
            attenuation_source: "from memory: pure water absorbs about 0.057 per metre at 550 nm, 0.25 dB/m (R. M. Pope, E. S. Fry, Appl. Opt. 36, 8710 (1997)); less in the blue, about 1.5 dB/m at 650 nm",
        },
        Material {
            id: "fused_silica",
            name: "Fused silica",
            model: IndexModel::SellmeierWavelengths {
                b: vec![0.6961663, 0.4079426, 0.8974794],
                lambda_um: vec![0.0684043, 0.1162414, 9.896161],
            },
            min_nm: 210.0,
            max_nm: 3710.0,
            basis: IndexBasis::Air,
            source: "I. H. Malitson, J. Opt. Soc. Am. 55, 1205 (1965)",
            note: "20 °C",
            attenuation_db_per_m: 0.01,
            attenuation_source: "from memory: scattering in silica is about 0.8 dB/km at 1 µm, growing as 1/λ⁴ to some 0.013 dB/m at 500 nm; bulk optical grades are of this order",
        },
        Material {
            id: "pmma",
            name: "Acrylic (PMMA)",
            model: IndexModel::BeadiePolynomial {
                a: [
                    2.1778, 6.1209e-3, -1.5004e-3, 2.3678e-2, -4.2137e-3, 7.3417e-4, -4.5042e-5,
                ],
            },
            min_nm: 420.0,
            max_nm: 1620.0,
            basis: IndexBasis::Air,
            source: "G. Beadie et al., Appl. Opt. 54, F139 (2015)",
            note: "stated accuracy better than 2e-4; grades vary by about ±0.002",
            attenuation_db_per_m: 0.3,
            attenuation_source: "from memory: acrylic fibre cores lose about 0.1–0.2 dB/m at 520–650 nm, moulding grades more; the IEC 60793-2-40 category A4a acrylic fibre may lose at most 0.40 dB/m at 650 nm",
        },
        fitted_polymer(
            "polycarbonate",
            "Polycarbonate (PC)",
            1.4182,
            0.021304,
            (1.0, "from memory: polycarbonate-core fibres lose roughly 0.6–1 dB/m in the red, more in the blue, where the material is yellowish"),
        ),
        fitted_polymer(
            "polystyrene",
            "Polystyrene (PS)",
            1.4435,
            0.020216,
            (0.5, "from memory: polystyrene-core fibres lose a few tenths of a dB/m at their best wavelengths (about 570–670 nm), more in the blue"),
        ),
        Material {
            id: "pdms",
            name: "Silicone (PDMS)",
            model: IndexModel::Sellmeier {
                b: vec![1.0093],
                c_um2: vec![0.013185],
            },
            min_nm: 350.0,
            max_nm: 700.0,
            basis: IndexBasis::Air,
            source: "F. Schneider et al., Sens. Actuators A 151, 95 (2009)",
            note: "cured PDMS; grades and curing change n by about ±0.005",
            attenuation_db_per_m: 2.0,
            attenuation_source: "from memory: clear cured silicone loses a few per cent of the light in 10 cm, some 1–3 dB/m in the visible",
        },
        Material {
            id: "propylene_glycol",
            name: "Propylene glycol (gel, coupling liquid)",
            model: IndexModel::Constant { n: 1.432 },
            min_nm: 400.0,
            max_nm: 800.0,
            basis: IndexBasis::Air,
            source: "n at 589 nm, 20 °C, 1.432 ± 0.001 (chemical property databases)",
            note: "constant: dispersion across the visible not modelled; the 400–800 nm range is our own choice, not the source's",
            attenuation_db_per_m: 0.25,
            attenuation_source: "no figure known to us: taken as water's (a guess, no source); in a gap a fraction of a millimetre thick it matters little",
        },
    ]
}

/// Look up a material by its identifier.
pub fn find(id: &str) -> Option<Material> {
    materials().into_iter().find(|m| m.id == id)
}

impl Material {
    /// Index relative to air at `wavelength_nm`, or an error naming the data range.
    /// `path` is the JSON path of the choice, for the message.
    pub fn n_rel_air(&self, wavelength_nm: f64, path: &str) -> Result<f64, FieldError> {
        if !(wavelength_nm >= self.min_nm && wavelength_nm <= self.max_nm) {
            return Err(FieldError::new(
                path,
                format!(
                    "{}: index data cover {}–{} nm only, the wavelength is {} nm ({})",
                    self.name,
                    self.min_nm,
                    self.max_nm,
                    show(wavelength_nm),
                    self.source
                ),
            ));
        }
        let wavelength_um = wavelength_nm * 1e-3;
        let n = self.model.n(wavelength_um);
        Ok(match self.basis {
            IndexBasis::Air => n,
            IndexBasis::Vacuum => n / n_standard_air(wavelength_um),
        })
    }
}

/// A material as chosen in a document: a library entry or a custom index model.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum MaterialChoice {
    /// A built-in material by identifier (`tirtrace materials` lists them with their sources).
    Library(#[schemars(transform = crate::schema::library_ids)] String),
    /// A user-given model (taken as relative to air).
    Custom(IndexModel),
}

impl MaterialChoice {
    /// Shorthand for a library choice.
    pub fn library(id: &str) -> Self {
        MaterialChoice::Library(id.to_string())
    }

    /// Shorthand for a custom constant index.
    pub fn constant(n: f64) -> Self {
        MaterialChoice::Custom(IndexModel::Constant { n })
    }

    /// Index relative to air at `wavelength_nm`. Errors name `path` and the allowed range.
    pub fn n_rel_air(&self, wavelength_nm: f64, path: &str) -> Result<f64, FieldError> {
        match self {
            MaterialChoice::Library(id) => match find(id) {
                Some(m) => m.n_rel_air(wavelength_nm, &format!("{path}.library")),
                None => Err(FieldError::new(
                    format!("{path}.library"),
                    format!(
                        "'{id}' is not a library material; choose one of: {}",
                        materials()
                            .iter()
                            .map(|m| m.id)
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                )),
            },
            MaterialChoice::Custom(model) => {
                let custom = format!("{path}.custom");
                model.validate(&custom)?;
                let n = model.n(wavelength_nm * 1e-3);
                if REFRACTIVE_INDEX.contains(n) {
                    Ok(n)
                } else {
                    Err(FieldError::new(
                        custom,
                        format!(
                            "gives n = {} at {} nm; a usable index is from {} to {}",
                            show(n),
                            show(wavelength_nm),
                            show(REFRACTIVE_INDEX.lo),
                            show(REFRACTIVE_INDEX.hi)
                        ),
                    ))
                }
            }
        }
    }
}
