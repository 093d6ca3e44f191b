//! Chemical elements by symbol and atomic number.

/// Element symbols in order of atomic number, Z = 1 … 118 (IUPAC).
pub const SYMBOLS: [&str; 118] = [
    "H", "He", "Li", "Be", "B", "C", "N", "O", "F", "Ne", "Na", "Mg", "Al", "Si", "P", "S", "Cl",
    "Ar", "K", "Ca", "Sc", "Ti", "V", "Cr", "Mn", "Fe", "Co", "Ni", "Cu", "Zn", "Ga", "Ge", "As",
    "Se", "Br", "Kr", "Rb", "Sr", "Y", "Zr", "Nb", "Mo", "Tc", "Ru", "Rh", "Pd", "Ag", "Cd", "In",
    "Sn", "Sb", "Te", "I", "Xe", "Cs", "Ba", "La", "Ce", "Pr", "Nd", "Pm", "Sm", "Eu", "Gd", "Tb",
    "Dy", "Ho", "Er", "Tm", "Yb", "Lu", "Hf", "Ta", "W", "Re", "Os", "Ir", "Pt", "Au", "Hg", "Tl",
    "Pb", "Bi", "Po", "At", "Rn", "Fr", "Ra", "Ac", "Th", "Pa", "U", "Np", "Pu", "Am", "Cm", "Bk",
    "Cf", "Es", "Fm", "Md", "No", "Lr", "Rf", "Db", "Sg", "Bh", "Hs", "Mt", "Ds", "Rg", "Cn", "Nh",
    "Fl", "Mc", "Lv", "Ts", "Og",
];

/// Atomic number of an element symbol (exact case: `He`, not `HE`), if it is one.
pub fn atomic_number(symbol: &str) -> Option<u32> {
    SYMBOLS
        .iter()
        .position(|s| *s == symbol)
        .map(|i| i as u32 + 1)
}

/// Symbol of atomic number `z` (1 … 118).
pub fn symbol(z: u32) -> Option<&'static str> {
    SYMBOLS.get((z as usize).checked_sub(1)?).copied()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn known_atomic_numbers() {
        // Periodic table (IUPAC): He 2, Ne 10, Ar 18, Fe 26, Cd 48, Xe 54, Hg 80.
        for (sym, z) in [
            ("H", 1),
            ("He", 2),
            ("Ne", 10),
            ("Ar", 18),
            ("Fe", 26),
            ("Cd", 48),
            ("Xe", 54),
            ("Hg", 80),
            ("Og", 118),
        ] {
            assert_eq!(atomic_number(sym), Some(z));
            assert_eq!(symbol(z), Some(sym));
        }
        assert_eq!(atomic_number("Xx"), None);
        assert_eq!(symbol(0), None);
    }
}
