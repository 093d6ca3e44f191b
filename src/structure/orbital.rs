//! Orbitals, spin-orbitals and Slater determinants as occupation bitsets.

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

use crate::notation::{Configuration, orbital_letter};

/// A one-electron orbital nl (both quantum numbers, no occupancy), e.g. `3d`.
/// Orbitals order by n, then l: the order in which configurations are written
/// and shells are coupled.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct Orbital {
    /// Principal quantum number.
    pub n: u32,
    /// Orbital angular momentum.
    pub l: u32,
}

impl fmt::Display for Orbital {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}{}", self.n, orbital_letter(self.l))
    }
}

impl FromStr for Orbital {
    type Err = String;

    /// Read `3d`, `10g` (through the configuration parser of `notation`).
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let config: Configuration = s.parse().map_err(|e| format!("{e}"))?;
        let mut shells = config.subshells();
        match (shells.next(), shells.next()) {
            (Some(shell), None) if shell.occupancy == 1 && !s.contains('.') => Ok(Orbital {
                n: shell.n,
                l: shell.l,
            }),
            _ => Err(format!("'{s}' is not an orbital such as 3d")),
        }
    }
}

/// The largest number of spin-orbitals in one parity block (the width of
/// [`Determinant`]).
pub const MAX_SPIN_ORBITALS: usize = 256;

/// A Slater determinant: the set of occupied spin-orbitals of a parity block,
/// meaning the product a†_{p₁} a†_{p₂} … |0⟩ with p₁ < p₂ < … (ascending index).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Default)]
pub struct Determinant {
    words: [u64; 4],
}

impl Determinant {
    /// The empty determinant (vacuum).
    pub fn empty() -> Determinant {
        Determinant::default()
    }

    /// True when spin-orbital `i` is occupied.
    pub fn contains(&self, i: usize) -> bool {
        self.words[i / 64] >> (i % 64) & 1 == 1
    }

    /// Occupy spin-orbital `i`.
    pub fn insert(&mut self, i: usize) {
        self.words[i / 64] |= 1 << (i % 64);
    }

    /// Empty spin-orbital `i`.
    pub fn remove(&mut self, i: usize) {
        self.words[i / 64] &= !(1 << (i % 64));
    }

    /// Number of occupied spin-orbitals with index below `i`.
    pub fn count_below(&self, i: usize) -> u32 {
        let word = i / 64;
        let mut count: u32 = self.words[..word].iter().map(|w| w.count_ones()).sum();
        let bit = i % 64;
        if bit > 0 {
            count += (self.words[word] & ((1u64 << bit) - 1)).count_ones();
        }
        count
    }

    /// Number of occupied spin-orbitals.
    pub fn len(&self) -> u32 {
        self.words.iter().map(|w| w.count_ones()).sum()
    }

    /// True for the vacuum.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The union of two determinants' occupations (for disjoint sets of orbitals).
    pub fn union(&self, other: &Determinant) -> Determinant {
        let mut words = self.words;
        for (w, o) in words.iter_mut().zip(other.words) {
            *w |= o;
        }
        Determinant { words }
    }

    /// Number of spin-orbitals occupied in one determinant and not the other.
    pub fn difference_count(&self, other: &Determinant) -> u32 {
        self.words
            .iter()
            .zip(other.words)
            .map(|(a, b)| (a ^ b).count_ones())
            .sum()
    }

    /// Occupied spin-orbitals in ascending order.
    pub fn occupied(&self) -> impl Iterator<Item = usize> + '_ {
        self.words.iter().enumerate().flat_map(|(w, &word)| {
            let mut bits = word;
            std::iter::from_fn(move || {
                if bits == 0 {
                    return None;
                }
                let b = bits.trailing_zeros() as usize;
                bits &= bits - 1;
                Some(w * 64 + b)
            })
        })
    }

    /// Spin-orbitals occupied here and not in `other`, ascending.
    pub fn minus<'a>(&'a self, other: &'a Determinant) -> impl Iterator<Item = usize> + 'a {
        self.occupied().filter(move |&i| !other.contains(i))
    }

    /// a†_to a_from applied to this determinant: the sign and the result, or `None`
    /// when `from` is empty or `to` is already occupied (and differs from `from`).
    pub fn excite(&self, from: usize, to: usize) -> Option<(f64, Determinant)> {
        if !self.contains(from) {
            return None;
        }
        let mut result = *self;
        result.remove(from);
        if result.contains(to) {
            return None;
        }
        let swaps = self.count_below(from) + result.count_below(to);
        result.insert(to);
        Some((if swaps.is_multiple_of(2) { 1.0 } else { -1.0 }, result))
    }
}

/// One spin-orbital of a block: its orbital (by index into the block's orbital
/// list), m_l, and twice m_s (±1).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct SpinOrbital {
    /// Index of the orbital in [`SpinOrbitalLayout::orbitals`].
    pub shell: usize,
    /// Orbital angular momentum l of that orbital.
    pub l: u32,
    /// Projection m_l.
    pub m_l: i32,
    /// Twice the spin projection: +1 (up) or −1 (down).
    pub two_m_s: i32,
}

/// The numbering of spin-orbitals in a parity block: orbitals in (n, l) order, and
/// within an orbital, m_l from +l down to −l, spin up before spin down. Spin-orbital
/// index = offset(orbital) + 2(l − m_l) + (0 for up, 1 for down).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SpinOrbitalLayout {
    orbitals: Vec<Orbital>,
    offsets: Vec<usize>,
    table: Vec<SpinOrbital>,
}

impl SpinOrbitalLayout {
    /// The layout of `orbitals` (sorted and deduplicated here); `None` beyond
    /// [`MAX_SPIN_ORBITALS`].
    pub fn new(mut orbitals: Vec<Orbital>) -> Option<SpinOrbitalLayout> {
        orbitals.sort();
        orbitals.dedup();
        let mut offsets = Vec::with_capacity(orbitals.len());
        let mut table = Vec::new();
        for (shell, orbital) in orbitals.iter().enumerate() {
            offsets.push(table.len());
            for m_index in 0..(2 * orbital.l + 1) as i32 {
                for two_m_s in [1, -1] {
                    table.push(SpinOrbital {
                        shell,
                        l: orbital.l,
                        m_l: orbital.l as i32 - m_index,
                        two_m_s,
                    });
                }
            }
        }
        (table.len() <= MAX_SPIN_ORBITALS).then_some(SpinOrbitalLayout {
            orbitals,
            offsets,
            table,
        })
    }

    /// The orbitals, in (n, l) order.
    pub fn orbitals(&self) -> &[Orbital] {
        &self.orbitals
    }

    /// Index of an orbital in [`Self::orbitals`].
    pub fn shell_index(&self, orbital: Orbital) -> Option<usize> {
        self.orbitals.binary_search(&orbital).ok()
    }

    /// First spin-orbital index of orbital number `shell`.
    pub fn offset(&self, shell: usize) -> usize {
        self.offsets[shell]
    }

    /// Number of spin-orbitals.
    pub fn len(&self) -> usize {
        self.table.len()
    }

    /// True when the layout has no orbitals.
    pub fn is_empty(&self) -> bool {
        self.table.is_empty()
    }

    /// The quantum numbers of spin-orbital `index`.
    pub fn spin_orbital(&self, index: usize) -> SpinOrbital {
        self.table[index]
    }

    /// The index of a spin-orbital (orbital number, m_l, 2m_s).
    pub fn index(&self, shell: usize, m_l: i32, two_m_s: i32) -> usize {
        let l = self.orbitals[shell].l as i32;
        self.offsets[shell] + 2 * (l - m_l) as usize + usize::from(two_m_s < 0)
    }

    /// Σ m_l over the occupied spin-orbitals of a determinant.
    pub fn total_m_l(&self, det: &Determinant) -> i32 {
        det.occupied().map(|i| self.table[i].m_l).sum()
    }

    /// Σ 2m_s over the occupied spin-orbitals of a determinant.
    pub fn total_two_m_s(&self, det: &Determinant) -> i32 {
        det.occupied().map(|i| self.table[i].two_m_s).sum()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn excitation_signs_follow_anticommutation() {
        // a†_0 a_2 |0 1 2⟩: a_2 passes two occupied orbitals (+), a†_0 lands at the
        // front of |0?..⟩ — but 0 is occupied, so no result.
        let mut d = Determinant::empty();
        for i in [0, 1, 2] {
            d.insert(i);
        }
        assert!(d.excite(2, 0).is_none());
        // a†_3 a_0 |0 1 2⟩ = a†_3 |1 2⟩ = (+1)(−1)^2 |1 2 3⟩ → sign +1.
        let (sign, e) = d.excite(0, 3).unwrap();
        assert_eq!(sign, 1.0);
        assert_eq!(e.occupied().collect::<Vec<_>>(), vec![1, 2, 3]);
        // a†_0 a_1 |1 3⟩ = a†_0 (−1)^0 |3⟩ = |0 3⟩ → +1; a†_4 a_1 |1 3⟩ = (+1)(−1)^1.
        let mut d = Determinant::empty();
        d.insert(1);
        d.insert(3);
        assert_eq!(d.excite(1, 0).unwrap().0, 1.0);
        assert_eq!(d.excite(1, 4).unwrap().0, -1.0);
        d.insert(200);
        assert_eq!(d.count_below(201), 3);
        assert_eq!(d.len(), 3);
    }

    #[test]
    fn layout_numbers_spin_orbitals() {
        let layout =
            SpinOrbitalLayout::new(vec![Orbital { n: 4, l: 0 }, Orbital { n: 3, l: 2 }]).unwrap();
        assert_eq!(layout.orbitals()[0], Orbital { n: 3, l: 2 });
        assert_eq!(layout.len(), 12);
        let i = layout.index(0, -1, -1);
        let s = layout.spin_orbital(i);
        assert_eq!((s.shell, s.m_l, s.two_m_s), (0, -1, -1));
        assert_eq!(layout.index(1, 0, 1), 10);
        assert_eq!("3d".parse::<Orbital>().unwrap(), Orbital { n: 3, l: 2 });
        assert!("3d2".parse::<Orbital>().is_err());
        assert!("3d.4s".parse::<Orbital>().is_err());
    }
}
