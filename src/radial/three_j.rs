//! The 3j symbol (l₁ l₂ l₃; 0 0 0) for integer l, squared — all the angular
//! algebra the configuration-average energy and the integral orders need — from
//! the project's [`crate::angular`] module.

use crate::angular::three_j;

/// (l₁ l₂ l₃; 0 0 0)², zero unless l₁ + l₂ + l₃ is even and the triangle rule holds
/// (Edmonds 1957, eq. 3.7.17).
pub(crate) fn three_j_zero_squared(l1: u32, l2: u32, l3: u32) -> f64 {
    three_j([2 * l1, 2 * l2, 2 * l3], [0, 0, 0]).map_or(0.0, |value| value * value)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Rows of tests/data/check-values/wigner3j.csv (sympy.physics.wigner.wigner_3j, exact;
    /// copied from ../shared/check-values) with integer j and all m = 0.
    #[test]
    fn matches_sympy_for_every_all_zero_m_row() {
        let text = include_str!("../../tests/data/check-values/wigner3j.csv");
        let mut checked = 0;
        for line in text.lines().skip(2) {
            let fields: Vec<&str> = line.split(',').collect();
            let int = |s: &str| s.parse::<u32>().ok();
            let (Some(l1), Some(l2), Some(l3)) = (int(fields[0]), int(fields[1]), int(fields[2]))
            else {
                continue;
            };
            if fields[3..6] != ["0", "0", "0"] {
                continue;
            }
            // The `square` column: the exact square as p/q.
            let expected = match fields[9].split_once('/') {
                Some((p, q)) => p.parse::<f64>().unwrap() / q.parse::<f64>().unwrap(),
                None => fields[9].parse::<f64>().unwrap(),
            };
            let got = three_j_zero_squared(l1, l2, l3);
            // Exact values rounded once to f64.
            assert!(
                (got - expected).abs() <= 1e-14 * expected,
                "({l1} {l2} {l3}; 0 0 0)² = {got}, sympy {expected}"
            );
            checked += 1;
        }
        assert!(checked >= 10, "only {checked} rows checked");
    }

    #[test]
    fn textbook_values() {
        // (1 1 0; 0 0 0)² = 1/3, (1 1 2; 0 0 0)² = 2/15, (2 2 2; 000)² = 2/35
        // (Edmonds 1957, table 2; values from memory, confirmed by the formula).
        assert!((three_j_zero_squared(1, 1, 0) - 1.0 / 3.0).abs() < 1e-15);
        assert!((three_j_zero_squared(1, 1, 2) - 2.0 / 15.0).abs() < 1e-15);
        assert!((three_j_zero_squared(2, 2, 2) - 2.0 / 35.0).abs() < 1e-15);
        assert_eq!(three_j_zero_squared(1, 1, 1), 0.0);
        assert_eq!(three_j_zero_squared(1, 1, 3), 0.0);
    }
}
