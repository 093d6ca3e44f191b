//! The J values of a new level that the E1 rules allow with its supporting levels,
//! and what their LS terms say about its spin.
//!
//! E1 rules on J (rigorous in any coupling): ΔJ = 0, ±1, J = 0 ↔ 0 excluded
//! (Condon & Shortley 1935, ch. 9; Cowan 1981, § 14.3). In LS coupling ΔS = 0 in
//! addition, broken by intercombination lines.

use super::SpinCheck;
use super::candidates::{Known, Point};

/// Whether a level of J = `new_twice`/2 combines in E1 with one of J =
/// `known_twice`/2: |ΔJ| ≤ 1, not 0–0 (both J of one kind, integer or half).
pub fn j_combines(new_twice: u32, known_twice: u32) -> bool {
    new_twice.abs_diff(known_twice) <= 2
        && (new_twice + known_twice).is_multiple_of(2)
        && !(new_twice == 0 && known_twice == 0)
}

/// The J values (twice J) that combine with the most of the `points`' levels, and
/// those points. Where several J combine with equally many, all the J that combine
/// with the same points as the lowest of them are allowed; the points of other J
/// are dropped.
pub(crate) fn choose_j(known: &[Known], points: Vec<Point>) -> (Vec<u32>, Vec<Point>) {
    let level_j: Vec<u32> = points
        .iter()
        .filter_map(|p| known.get(p.level as usize).map(|k| k.twice_j))
        .collect();
    let mut trial: Vec<u32> = level_j
        .iter()
        .flat_map(|&j| [j.saturating_sub(2), j, j + 2])
        .collect();
    trial.sort_unstable();
    trial.dedup();
    let mask = |j: u32| -> Vec<bool> { level_j.iter().map(|&lj| j_combines(j, lj)).collect() };
    let count = |m: &[bool]| m.iter().filter(|&&b| b).count();
    let best = trial.iter().map(|&j| count(&mask(j))).max().unwrap_or(0);
    let Some(&first) = trial.iter().find(|&&j| count(&mask(j)) == best) else {
        return (Vec::new(), Vec::new());
    };
    let chosen = mask(first);
    let allowed = trial.into_iter().filter(|&j| mask(j) == chosen).collect();
    let kept = points
        .into_iter()
        .zip(chosen)
        .filter_map(|(p, keep)| keep.then_some(p))
        .collect();
    (allowed, kept)
}

/// The spin check of a candidate: `None` unless every supporting level has an LS
/// term. For each multiplicity 2S + 1 of the supporting levels, the lines with
/// another multiplicity are intercombination lines; the best multiplicities make
/// fewest.
pub(crate) fn spin_check(known: &[Known], points: &[Point]) -> Option<SpinCheck> {
    let multiplicities: Vec<u32> = points
        .iter()
        .map(|p| known.get(p.level as usize).and_then(|k| k.multiplicity))
        .collect::<Option<_>>()?;
    let mut options = multiplicities.clone();
    options.sort_unstable();
    options.dedup();
    let crossing = |m: u32| multiplicities.iter().filter(|&&x| x != m).count();
    let least = options.iter().map(|&m| crossing(m)).min()?;
    Some(SpinCheck {
        best_multiplicities: options
            .into_iter()
            .filter(|&m| crossing(m) == least)
            .collect(),
        intercombination_lines: least,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::notation::Parity;

    fn known(twice_j: u32, multiplicity: Option<u32>) -> Known {
        Known {
            energy: 0.0,
            uncertainty: 0.0,
            parity: Parity::Odd,
            twice_j,
            multiplicity,
            index: 0,
        }
    }

    fn point(level: u32) -> Point {
        Point {
            energy: 0.0,
            uncertainty: 1.0,
            line: level,
            level,
            upper: true,
        }
    }

    #[test]
    fn e1_j_rule() {
        // ΔJ = 0, ±1, not 0–0 (Condon & Shortley 1935, ch. 9).
        assert!(j_combines(2, 0) && j_combines(0, 2) && j_combines(2, 2));
        assert!(!j_combines(0, 0));
        assert!(!j_combines(4, 0));
        assert!(j_combines(3, 1) && j_combines(1, 1) && !j_combines(5, 1));
    }

    #[test]
    fn allowed_j_intersects_the_supports() {
        // Known J = 0, 1, 2: only J = 1 combines with all three (J = 0 fails 0–0
        // and 0–2, J = 2 fails 2–0).
        let levels = [known(0, None), known(2, None), known(4, None)];
        let (allowed, kept) = choose_j(&levels, vec![point(0), point(1), point(2)]);
        assert_eq!(allowed, vec![2]);
        assert_eq!(kept.len(), 3);
        // Known J = 1 and 1: J = 0, 1, 2 all combine.
        let levels = [known(2, None), known(2, None)];
        let (allowed, _) = choose_j(&levels, vec![point(0), point(1)]);
        assert_eq!(allowed, vec![0, 2, 4]);
        // Known J = 0, 0 and 3: no J combines with all; two of the three are kept,
        // the two J = 0 levels, with J = 1.
        let levels = [known(0, None), known(0, None), known(6, None)];
        let (allowed, kept) = choose_j(&levels, vec![point(0), point(1), point(2)]);
        assert_eq!(allowed, vec![2]);
        assert_eq!(kept.iter().map(|p| p.level).collect::<Vec<_>>(), vec![0, 1]);
    }

    #[test]
    fn spin_of_the_new_level() {
        // Two triplets and a singlet: a triplet new level makes one intercombination
        // line (ΔS = 0 rule of LS coupling, Condon & Shortley 1935, ch. 9).
        let levels = [known(2, Some(3)), known(2, Some(3)), known(2, Some(1))];
        let check = spin_check(&levels, &[point(0), point(1), point(2)]).unwrap();
        assert_eq!(check.best_multiplicities, vec![3]);
        assert_eq!(check.intercombination_lines, 1);
        let check = spin_check(&levels, &[point(0), point(1)]).unwrap();
        assert_eq!(check.intercombination_lines, 0);
        // A level without an LS term: not judged.
        let levels = [known(2, Some(3)), known(2, None)];
        assert!(spin_check(&levels, &[point(0), point(1)]).is_none());
    }
}
