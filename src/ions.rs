//! Transition-metal ions: their dⁿ configuration and free-ion Racah parameters.
//!
//! Free-ion B₀ (and C₀) come from more than one table, because "free-ion B"
//! depends on which atomic terms were fitted (shared reference notes §2):
//! * "Jolly 1989" — B values as tabulated with Jørgensen's h·k table (SRC);
//! * "common tables (from memory)" — the Figgis/Lever-type B and C values in
//!   wide use; from memory, not verified against the books.
//!
//! β = B/B₀ must always be reported together with the B₀ and its source.

use serde::Serialize;
use std::sync::OnceLock;

/// One free-ion parameter set and where it comes from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FreeIon {
    pub b0: f64,
    pub c0: Option<f64>,
    pub source: &'static str,
}

/// An ion, its d-electron count and its free-ion parameter sets.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Ion {
    /// "Cr3+".
    pub symbol: String,
    pub element: &'static str,
    pub charge: u8,
    pub d_electrons: u8,
    /// 3 for 3d, 4 for 4d, 5 for 5d.
    pub row: u8,
    pub free_ion: Vec<FreeIon>,
}

/// Source name of the Jolly (1989) B values.
pub const JOLLY: &str = "Jolly 1989";
/// Source name of the commonly used tables.
pub const COMMON: &str = "common tables (from memory)";

/// (element, charge, row, group number, Jolly B₀, common B₀, common C₀).
type Row = (
    &'static str,
    u8,
    u8,
    u8,
    Option<f64>,
    Option<f64>,
    Option<f64>,
);

const TABLE: &[Row] = &[
    ("Ti", 2, 3, 4, Some(695.0), Some(718.0), Some(2629.0)),
    ("V", 2, 3, 5, Some(755.0), Some(766.0), Some(2855.0)),
    ("Cr", 2, 3, 6, Some(810.0), Some(830.0), Some(3430.0)),
    ("Mn", 2, 3, 7, Some(860.0), Some(960.0), Some(3325.0)),
    ("Fe", 2, 3, 8, Some(917.0), Some(1058.0), Some(3901.0)),
    ("Co", 2, 3, 9, Some(971.0), Some(1115.0), Some(4366.0)),
    ("Ni", 2, 3, 10, Some(1030.0), Some(1080.0), Some(4831.0)),
    ("Cu", 2, 3, 11, None, Some(1238.0), Some(4659.0)),
    ("Ti", 3, 3, 4, None, None, None),
    ("V", 3, 3, 5, Some(861.0), Some(861.0), Some(4165.0)),
    ("Cr", 3, 3, 6, Some(918.0), Some(918.0), Some(3850.0)),
    ("Mn", 3, 3, 7, Some(965.0), Some(1140.0), Some(3675.0)),
    ("Fe", 3, 3, 8, Some(1015.0), None, None),
    ("Co", 3, 3, 9, Some(1065.0), None, None),
    ("Ni", 3, 3, 10, Some(1115.0), None, None),
    ("Mn", 4, 3, 7, None, None, None),
    ("Mo", 3, 4, 6, None, None, None),
    ("Ru", 2, 4, 8, None, None, None),
    ("Ru", 3, 4, 8, None, None, None),
    ("Rh", 3, 4, 9, None, None, None),
    ("Pd", 2, 4, 10, None, None, None),
    ("Pd", 4, 4, 10, None, None, None),
    ("Re", 4, 5, 7, None, None, None),
    ("Os", 3, 5, 8, None, None, None),
    ("Ir", 3, 5, 9, None, None, None),
    ("Pt", 2, 5, 10, None, None, None),
    ("Pt", 4, 5, 10, None, None, None),
];

/// Every ion in the table.
pub fn all_ions() -> &'static [Ion] {
    static IONS: OnceLock<Vec<Ion>> = OnceLock::new();
    IONS.get_or_init(|| {
        TABLE
            .iter()
            .map(
                |&(element, charge, row, group, jolly, common_b, common_c)| {
                    let mut free_ion = Vec::new();
                    if let Some(b0) = jolly {
                        free_ion.push(FreeIon {
                            b0,
                            c0: None,
                            source: JOLLY,
                        });
                    }
                    if let Some(b0) = common_b {
                        free_ion.push(FreeIon {
                            b0,
                            c0: common_c,
                            source: COMMON,
                        });
                    }
                    Ion {
                        symbol: format!("{element}{charge}+"),
                        element,
                        charge,
                        // Mⁿ⁺ of group g keeps g − n d electrons (s electrons lost first).
                        d_electrons: group - charge,
                        row,
                        free_ion,
                    }
                },
            )
            .collect()
    })
}

fn roman(text: &str) -> Option<u8> {
    match text {
        "I" => Some(1),
        "II" => Some(2),
        "III" => Some(3),
        "IV" => Some(4),
        "V" => Some(5),
        "VI" => Some(6),
        _ => None,
    }
}

/// Parses "Cr3+", "Cr+3", "Co(II)", "co(ii)" and finds the ion.
pub fn ion(symbol: &str) -> Option<&'static Ion> {
    let s = symbol.trim();
    let letters: String = s.chars().take_while(|c| c.is_ascii_alphabetic()).collect();
    let rest = s.get(letters.len()..)?.trim();
    let charge = if let Some(inner) = rest.strip_prefix('(').and_then(|r| r.strip_suffix(')')) {
        roman(&inner.to_ascii_uppercase())?
    } else {
        rest.trim_matches('+').parse::<u8>().ok()?
    };
    all_ions()
        .iter()
        .find(|i| i.element.eq_ignore_ascii_case(&letters) && i.charge == charge)
}

impl Ion {
    /// The free-ion set from `source` (matched case-insensitively by prefix),
    /// or the first one listed when `source` is `None`.
    pub fn free_ion_from(&self, source: Option<&str>) -> Option<&FreeIon> {
        match source {
            None => self.free_ion.first(),
            Some(want) => self.free_ion.iter().find(|f| {
                f.source
                    .to_ascii_lowercase()
                    .starts_with(&want.to_ascii_lowercase())
            }),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_symbols_and_counts_d_electrons() {
        // d counts: Cr³⁺ d3, Ni²⁺ d8, Co²⁺ d7, Ti³⁺ d1, Rh³⁺ d6 (periodic table).
        assert_eq!(ion("Cr3+").map(|i| i.d_electrons), Some(3));
        assert_eq!(ion("Ni2+").map(|i| i.d_electrons), Some(8));
        assert_eq!(ion("Co(II)").map(|i| i.d_electrons), Some(7));
        assert_eq!(ion("ti(iii)").map(|i| i.d_electrons), Some(1));
        assert_eq!(ion("Rh3+").map(|i| i.d_electrons), Some(6));
        assert!(ion("Xx9+").is_none());
        assert!(ion("").is_none());
    }

    #[test]
    fn free_ion_sources() {
        // Jolly 1989 B(Cr³⁺) = 918 (SRC, reference notes §2); common Ni²⁺ 1080 (from memory).
        let cr = ion("Cr3+").unwrap();
        assert_eq!(cr.free_ion_from(Some("jolly")).map(|f| f.b0), Some(918.0));
        let ni = ion("Ni2+").unwrap();
        assert_eq!(ni.free_ion_from(Some("common")).map(|f| f.b0), Some(1080.0));
    }
}
