//! The Condon–Shortley coefficients c^k(l m, l' m').

use num_rational::BigRational;

use super::exact::{SignedSqrt, rational};
use super::{AngularError, three_j_exact};

/// The exact Condon–Shortley coefficient
/// c^k(l m, l' m') = (−1)^m √((2l+1)(2l'+1)) (l k l'; 0 0 0)(l k l'; −m m−m' m')
/// (Condon & Shortley 1935, §6⁸; Cowan 1981, eq. 5.17). Integer arguments, not
/// doubled. Zero unless l + k + l' is even and |l − l'| ≤ k ≤ l + l'.
pub fn ck_exact(l: u32, m: i32, lp: u32, mp: i32, k: u32) -> Result<SignedSqrt, AngularError> {
    for (two_j, two_m) in [(2 * l, 2 * m), (2 * lp, 2 * mp)] {
        if two_m.unsigned_abs() > two_j {
            return Err(AngularError::ProjectionOutOfRange { two_j, two_m });
        }
    }
    if (m - mp).unsigned_abs() > k {
        // The multipole k cannot carry the change of projection: a selection-rule zero.
        return Ok(SignedSqrt::zero());
    }
    let axial = three_j_exact([2 * l, 2 * k, 2 * lp], [0, 0, 0])?;
    let projected = three_j_exact([2 * l, 2 * k, 2 * lp], [-2 * m, 2 * (m - mp), 2 * mp])?;
    let sign = if m.rem_euclid(2) == 0 { 1 } else { -1 };
    let weight: BigRational = rational((2 * l as i64 + 1) * (2 * lp as i64 + 1));
    Ok(axial.mul(&projected).scale(sign, weight))
}

/// c^k(l m, l' m') as `f64` (see [`ck_exact`]), from the remembered `f64` 3j
/// symbols (relative error a few 1e-16).
pub fn ck(l: u32, m: i32, lp: u32, mp: i32, k: u32) -> Result<f64, AngularError> {
    for (two_j, two_m) in [(2 * l, 2 * m), (2 * lp, 2 * mp)] {
        if two_m.unsigned_abs() > two_j {
            return Err(AngularError::ProjectionOutOfRange { two_j, two_m });
        }
    }
    if (m - mp).unsigned_abs() > k {
        return Ok(0.0);
    }
    let axial = super::three_j([2 * l, 2 * k, 2 * lp], [0, 0, 0])?;
    let projected = super::three_j([2 * l, 2 * k, 2 * lp], [-2 * m, 2 * (m - mp), 2 * mp])?;
    let sign = if m.rem_euclid(2) == 0 { 1.0 } else { -1.0 };
    Ok(sign * (((2 * l + 1) * (2 * lp + 1)) as f64).sqrt() * axial * projected)
}

/// Every c^k(l m, l' m') for l, l' ≤ `max_l`, computed once and looked up in
/// constant time: the Slater–Condon rules call it in their innermost loop.
#[derive(Debug, Clone)]
pub struct CkTable {
    max_l: u32,
    values: Vec<f64>,
}

impl CkTable {
    /// The table for l, l' ≤ `max_l` (k ≤ 2·`max_l`).
    pub fn new(max_l: u32) -> CkTable {
        let side = (2 * max_l + 1) as usize;
        let kmax = (2 * max_l + 1) as usize;
        let lcount = (max_l + 1) as usize;
        let mut values = vec![0.0; lcount * lcount * kmax * side * side];
        let mut table = CkTable {
            max_l,
            values: Vec::new(),
        };
        for l in 0..=max_l {
            for lp in 0..=max_l {
                for k in l.abs_diff(lp)..=(l + lp) {
                    if (l + k + lp) % 2 != 0 {
                        continue;
                    }
                    for m in -(l as i32)..=l as i32 {
                        for mp in -(lp as i32)..=lp as i32 {
                            let index = table.index(l, m, lp, mp, k);
                            // Arguments are in range by construction.
                            values[index] = ck(l, m, lp, mp, k).unwrap_or(0.0);
                        }
                    }
                }
            }
        }
        table.values = values;
        table
    }

    /// The table for `max_l`, made once per process and shared: a level model
    /// is built many times over in a fit session, and the table costs thousands
    /// of 3j symbols.
    pub fn shared(max_l: u32) -> std::sync::Arc<CkTable> {
        use std::collections::BTreeMap;
        use std::sync::{Arc, Mutex, OnceLock};
        static TABLES: OnceLock<Mutex<BTreeMap<u32, Arc<CkTable>>>> = OnceLock::new();
        let tables = TABLES.get_or_init(|| Mutex::new(BTreeMap::new()));
        if let Some(found) = tables.lock().ok().and_then(|t| t.get(&max_l).cloned()) {
            return found;
        }
        let table = Arc::new(CkTable::new(max_l));
        if let Ok(mut t) = tables.lock() {
            t.entry(max_l).or_insert_with(|| table.clone());
        }
        table
    }

    /// The largest l in the table.
    pub fn max_l(&self) -> u32 {
        self.max_l
    }

    fn index(&self, l: u32, m: i32, lp: u32, mp: i32, k: u32) -> usize {
        let side = (2 * self.max_l + 1) as usize;
        let kmax = (2 * self.max_l + 1) as usize;
        let lcount = (self.max_l + 1) as usize;
        let m_index = (m + self.max_l as i32) as usize;
        let mp_index = (mp + self.max_l as i32) as usize;
        (((l as usize * lcount + lp as usize) * kmax + k as usize) * side + m_index) * side
            + mp_index
    }

    /// c^k(l m, l' m'); 0 outside the table or when |m| > l.
    pub fn get(&self, l: u32, m: i32, lp: u32, mp: i32, k: u32) -> f64 {
        if l > self.max_l
            || lp > self.max_l
            || k > 2 * self.max_l
            || m.unsigned_abs() > l
            || mp.unsigned_abs() > lp
        {
            return 0.0;
        }
        self.values[self.index(l, m, lp, mp, k)]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn condon_shortley_table_entries() {
        // Condon & Shortley (1935) table 1⁶: c²(p1, p1) = −1/5, c²(p0, p0) = 2/5,
        // c¹(s0, p0) = 1/√3.
        assert!((ck(1, 1, 1, 1, 2).unwrap() + 0.2).abs() < 1e-15);
        assert!((ck(1, 0, 1, 0, 2).unwrap() - 0.4).abs() < 1e-15);
        assert!((ck(0, 0, 1, 0, 1).unwrap() - 1.0 / 3f64.sqrt()).abs() < 1e-15);
        let table = CkTable::new(3);
        assert_eq!(table.get(1, 1, 1, 1, 2), ck(1, 1, 1, 1, 2).unwrap());
        let exact = ck_exact(3, -2, 2, 1, 3).unwrap().to_f64();
        assert!((table.get(3, -2, 2, 1, 3) - exact).abs() < 1e-15);
        assert_eq!(table.get(1, 1, 1, 1, 1), 0.0);
    }
}
