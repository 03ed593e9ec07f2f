//! Materials and their band parameters (Varshni gap, densities of states).

/// A semiconductor the full model knows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Material {
    /// Silicon.
    Si,
    /// Germanium.
    Ge,
    /// Gallium arsenide.
    #[serde(rename = "gaas")]
    GaAs,
    /// Indium antimonide.
    #[serde(rename = "insb")]
    InSb,
    /// Indium arsenide.
    #[serde(rename = "inas")]
    InAs,
    /// 4H silicon carbide.
    #[serde(rename = "4h-sic")]
    Sic4H,
}

impl Material {
    /// All materials, in documentation order.
    pub const ALL: [Material; 6] = [
        Material::Si,
        Material::Ge,
        Material::GaAs,
        Material::InSb,
        Material::InAs,
        Material::Sic4H,
    ];

    /// Lower-case name used on the command line and in files (`si`, `gaas`, `4h-sic`).
    pub fn name(self) -> &'static str {
        match self {
            Material::Si => "si",
            Material::Ge => "ge",
            Material::GaAs => "gaas",
            Material::InSb => "insb",
            Material::InAs => "inas",
            Material::Sic4H => "4h-sic",
        }
    }

    /// Parses a command-line name (case-insensitive).
    pub fn from_name(name: &str) -> Option<Material> {
        let lower = name.to_ascii_lowercase();
        Material::ALL.into_iter().find(|m| m.name() == lower)
    }
}

impl std::fmt::Display for Material {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}
