//! Electric-dipole (E1) selection rules between two labelled levels.
//!
//! Rigorous rules (any coupling): the parities differ, and ΔJ = 0, ±1 with J = 0 ↔ 0
//! excluded. In LS coupling, in addition, ΔS = 0 and ΔL = 0, ±1 with L = 0 ↔ 0
//! excluded; for pure configurations, one electron jumps with Δl = ±1 (Condon &
//! Shortley 1935, ch. 9; Cowan 1981, *The Theory of Atomic Structure and Spectra*,
//! § 14.3). The rigorous rules decide whether a pair of levels is a candidate at all
//! ([`is_e1_candidate`]); the others only flag the line ([`classify`]), because
//! spin–orbit mixing and configuration interaction let such lines through
//! (intercombination lines, two-electron jumps).

use std::fmt;

use serde::{Deserialize, Serialize};

use super::label::LevelLabel;
use crate::notation::Term;

/// Which selection rules, beyond the rigorous parity and J rules, were applied to a
/// line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum SelectionRules {
    /// Both levels carry LS labels: ΔS = 0 and ΔL = 0, ±1 (not L = 0 ↔ 0) were
    /// examined, and a line breaking them is flagged.
    Ls,
    /// At least one level is labelled in another coupling (pair or jj coupling, as
    /// for the excited levels of Ne I and Ar I): the LS rules do not apply, so only
    /// the parity and J rules were applied.
    ParityAndJ,
}

impl SelectionRules {
    /// Short name for outputs: `LS` or `parity+J`.
    pub fn name(self) -> &'static str {
        match self {
            SelectionRules::Ls => "LS",
            SelectionRules::ParityAndJ => "parity+J",
        }
    }

    /// Parse a name printed by [`SelectionRules::name`].
    pub fn from_name(name: &str) -> Option<SelectionRules> {
        match name.trim() {
            "LS" => Some(SelectionRules::Ls),
            "parity+J" => Some(SelectionRules::ParityAndJ),
            _ => None,
        }
    }
}

impl fmt::Display for SelectionRules {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// What a predicted E1 line breaks of the non-rigorous rules.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub struct TransitionFlags {
    /// ΔS ≠ 0 between two LS-labelled levels: an intercombination (spin-forbidden)
    /// line, seen through spin–orbit mixing (flag `intercombination`).
    pub intercombination: bool,
    /// |ΔL| > 1, or L = 0 ↔ 0, between two LS-labelled levels: forbidden in L in
    /// pure LS coupling (flag `L-forbidden`).
    pub l_forbidden: bool,
    /// One electron moves between the configurations, but not with Δl = ±1
    /// (flag `jump-forbidden`).
    pub jump_forbidden: bool,
    /// More than one electron changes subshell between the configurations (flag
    /// `two-electron-jump`): the line is seen only through configuration mixing.
    ///
    /// Both jump flags are judged on the subshells written in the labels, parent
    /// terms ignored; neither is judged when the two labels hold different numbers
    /// of electrons (closed shells written in one and not the other), when a label
    /// has no configuration, or when a subshell's n is not given (`nd`).
    pub two_electron_jump: bool,
}

impl TransitionFlags {
    /// The output names of the rules broken, in a fixed order: `intercombination`,
    /// `L-forbidden`, `jump-forbidden`, `two-electron-jump`.
    pub fn names(&self) -> Vec<&'static str> {
        [
            (self.intercombination, "intercombination"),
            (self.l_forbidden, "L-forbidden"),
            (self.jump_forbidden, "jump-forbidden"),
            (self.two_electron_jump, "two-electron-jump"),
        ]
        .into_iter()
        .filter_map(|(set, name)| set.then_some(name))
        .collect()
    }

    /// Number of rules broken, 0 to 3 (the two jump flags exclude each other).
    pub fn broken(&self) -> u8 {
        u8::from(self.intercombination)
            + u8::from(self.l_forbidden)
            + u8::from(self.jump_forbidden)
            + u8::from(self.two_electron_jump)
    }
}

/// Whether two levels may combine in an E1 line: opposite parity, and ΔJ = 0, ±1
/// but not J = 0 ↔ 0.
pub fn is_e1_candidate(a: &LevelLabel, b: &LevelLabel) -> bool {
    RuleKey::of(a).combines_with(&RuleKey::of(b))
}

/// The rules applied to the line between `a` and `b` and the flags it earns (the
/// order of the two levels does not matter). Call only for pairs that pass
/// [`is_e1_candidate`].
pub fn classify(a: &LevelLabel, b: &LevelLabel) -> (SelectionRules, TransitionFlags) {
    RuleKey::of(a).classify(&RuleKey::of(b))
}

/// What the selection rules need of one level, computed once per level so that the
/// n² pairs of a table cost no allocation.
#[derive(Debug, Clone)]
pub(crate) struct RuleKey {
    parity: crate::notation::Parity,
    twice_j: u32,
    /// (2S + 1, L) of an LS term.
    ls: Option<(u32, u32)>,
    /// Occupancy per subshell (n, l), sorted; `None` when jumps cannot be judged
    /// (no configuration, or a subshell of unknown n).
    occupancy: Option<Vec<((u32, u32), u32)>>,
}

impl RuleKey {
    /// The key of a label.
    pub(crate) fn of(label: &LevelLabel) -> RuleKey {
        let c = &label.configuration;
        let occupancy = (!c.is_empty() && c.is_fully_numbered()).then(|| {
            let mut occ: Vec<((u32, u32), u32)> =
                c.subshells().map(|s| ((s.n, s.l), s.occupancy)).collect();
            occ.sort_unstable();
            occ
        });
        RuleKey {
            parity: label.parity(),
            twice_j: label.j.twice,
            ls: match &label.term {
                Term::Ls(t) => Some((t.multiplicity, t.l)),
                _ => None,
            },
            occupancy,
        }
    }

    /// What [`RuleKey::combines_with`] and [`RuleKey::rules`] look at: parity, 2J,
    /// and whether the term is LS. Levels of one class combine alike.
    pub(crate) fn e1_class(&self) -> (crate::notation::Parity, u32, bool) {
        (self.parity, self.twice_j, self.ls.is_some())
    }

    /// [`is_e1_candidate`] on two keys.
    pub(crate) fn combines_with(&self, other: &RuleKey) -> bool {
        let (ja, jb) = (self.twice_j, other.twice_j);
        self.parity != other.parity && ja.abs_diff(jb) <= 2 && !(ja == 0 && jb == 0)
    }

    /// [`classify`] on two keys.
    pub(crate) fn classify(&self, other: &RuleKey) -> (SelectionRules, TransitionFlags) {
        let jump = match (&self.occupancy, &other.occupancy) {
            (Some(a), Some(b)) => electron_jump(a, b),
            _ => Jump::Allowed,
        };
        let mut flags = TransitionFlags {
            jump_forbidden: jump == Jump::OneOtherDl,
            two_electron_jump: jump == Jump::Several,
            ..TransitionFlags::default()
        };
        let rules = match (self.ls, other.ls) {
            (Some((ma, la)), Some((mb, lb))) => {
                flags.intercombination = ma != mb;
                flags.l_forbidden = la.abs_diff(lb) > 1 || (la == 0 && lb == 0);
                SelectionRules::Ls
            }
            _ => SelectionRules::ParityAndJ,
        };
        (rules, flags)
    }
}

/// How the electrons move between two configurations.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Jump {
    /// One electron, Δl = ±1; or not judged (different electron counts).
    Allowed,
    /// One electron, Δl ≠ ±1.
    OneOtherDl,
    /// Several electrons (or none).
    Several,
}

/// How the configurations with the sorted occupancies `a` and `b` differ: one
/// electron moved from a subshell of l to one of l ± 1 (or not judged: different
/// electron counts), one electron with another Δl, or more than one electron.
fn electron_jump(a: &[((u32, u32), u32)], b: &[((u32, u32), u32)]) -> Jump {
    let total = |occ: &[((u32, u32), u32)]| occ.iter().map(|(_, n)| u64::from(*n)).sum::<u64>();
    if total(a) != total(b) {
        return Jump::Allowed;
    }
    // Net changes of occupancy per subshell, b minus a, from a merge of the two
    // sorted lists; more than two changed subshells is already "several".
    let mut changes: [((u32, u32), i64); 2] = [((0, 0), 0); 2];
    let mut count = 0;
    let (mut i, mut k) = (0, 0);
    loop {
        let (shell, change) = match (a.get(i), b.get(k)) {
            (None, None) => break,
            (Some(&(sa, na)), Some(&(sb, nb))) if sa == sb => {
                i += 1;
                k += 1;
                (sa, i64::from(nb) - i64::from(na))
            }
            (Some(&(sa, na)), Some(&(sb, _))) if sa < sb => {
                i += 1;
                (sa, -i64::from(na))
            }
            (Some(&(sa, na)), None) => {
                i += 1;
                (sa, -i64::from(na))
            }
            (_, Some(&(sb, nb))) => {
                k += 1;
                (sb, i64::from(nb))
            }
        };
        if change != 0 {
            if count == 2 {
                return Jump::Several;
            }
            changes[count] = (shell, change);
            count += 1;
        }
    }
    match (count, changes) {
        (2, [(s1, n1), (s2, n2)]) if n1.abs() == 1 && n1 == -n2 => {
            if s1.1.abs_diff(s2.1) == 1 {
                Jump::Allowed
            } else {
                Jump::OneOtherDl
            }
        }
        _ => Jump::Several,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn label(text: &str) -> LevelLabel {
        text.parse().unwrap()
    }

    #[test]
    fn rigorous_rules() {
        // Parity must change; ΔJ = 0, ±1; not 0–0 (Condon & Shortley 1935, ch. 9).
        let s0 = label("1s2 1S 0");
        assert!(is_e1_candidate(&s0, &label("1s.2p 1P° 1")));
        assert!(is_e1_candidate(&s0, &label("1s.2p 3P° 1")));
        assert!(!is_e1_candidate(&s0, &label("1s.2p 3P° 0")), "0–0");
        assert!(!is_e1_candidate(&s0, &label("1s.2p 3P° 2")), "ΔJ = 2");
        assert!(!is_e1_candidate(&s0, &label("1s.2s 1S 0")), "same parity");
        assert!(is_e1_candidate(&label("2p 2P° 3/2"), &label("3d 2D 5/2")));
        assert!(!is_e1_candidate(&label("2p 2P° 1/2"), &label("3d 2D 5/2")));
    }

    #[test]
    fn helium_1083_nm_group_is_ls_allowed() {
        // He I 2s 3S1 – 2p 3P°0,1,2 (the 1083 nm triplet): ΔS = 0, ΔL = 1, one
        // electron 2s → 2p (a textbook allowed multiplet).
        for j in 0..=2 {
            let (rules, flags) = classify(&label("1s.2s 3S 1"), &label(&format!("1s.2p 3P° {j}")));
            assert_eq!(rules, SelectionRules::Ls);
            assert_eq!(flags, TransitionFlags::default());
        }
    }

    #[test]
    fn helium_59_nm_line_is_an_intercombination_line() {
        // He I 1s2 1S0 – 1s2p 3P°1: ΔS = 1, the spin-forbidden line near 59.1 nm.
        let (rules, flags) = classify(&label("1s2 1S 0"), &label("1s.2p 3P° 1"));
        assert_eq!(rules, SelectionRules::Ls);
        assert!(flags.intercombination && !flags.l_forbidden && !flags.jump_forbidden);
    }

    #[test]
    fn l_forbidden_lines() {
        // ΔL = 2 (S–D) and L = 0 ↔ 0 (S–S) break the LS rule on L.
        let (_, ps) = classify(&label("1s.2p 1P° 1"), &label("1s.3s 1S 0"));
        assert!(!ps.l_forbidden); // P–S: ΔL = 1
        let (_, ss) = classify(&label("1s.2p 1P° 1"), &label("1s.2s 3S 1"));
        assert!(ss.intercombination && !ss.l_forbidden);
        // S ↔ S° (labels made up to exercise the rule): L = 0 ↔ 0 is forbidden.
        let (_, s0) = classify(&label("2s2.2p3 4S° 3/2"), &label("2s2.2p2.3s 4S 3/2"));
        assert!(s0.l_forbidden && !s0.intercombination && !s0.jump_forbidden);
        let (_, f) = classify(&label("1s.2s 3S 1"), &label("1s.4f 3F° 2"));
        assert!(f.l_forbidden && f.jump_forbidden && !f.two_electron_jump); // s → f: Δl = 3
        let (_, pp) = classify(&label("2p2 3P 1"), &label("2p.3s 3P° 1"));
        assert!(!pp.l_forbidden && !pp.jump_forbidden); // ΔL = 0 is allowed; 2p → 3s
    }

    #[test]
    fn two_electron_jumps_are_flagged() {
        // 6s7s → 6p2 moves two electrons (Hg I labels).
        let (_, f) = classify(&label("5d10.6s.7s 3S 1"), &label("5d10.6s.6p 3P° 1"));
        assert!(!f.jump_forbidden); // 7s → 6p
        let (_, f) = classify(
            &label("5d10.6p2 3P 1"),
            &label("5d9.6s2.(2D<5/2>).6p 2[3/2]° 1"),
        );
        // 6p2 → 5d9 6s2 6p: two electrons move.
        assert!(f.two_electron_jump && !f.jump_forbidden);
        assert_eq!(f.names(), vec!["two-electron-jump"]);
        assert_eq!(f.broken(), 1);
    }

    #[test]
    fn pair_coupled_labels_get_parity_and_j_rules_only() {
        // Ne I: 2p5 3p 2[1/2] 1 – 2p5 3s 2[3/2]° 2 (pair coupling, no LS rules).
        let (rules, flags) = classify(
            &label("2s2.2p5.(2P°<3/2>).3p 2[1/2] 1"),
            &label("2s2.2p5.(2P°<3/2>).3s 2[3/2]° 2"),
        );
        assert_eq!(rules, SelectionRules::ParityAndJ);
        assert_eq!(flags, TransitionFlags::default());
        // One LS label and one pair label: still no LS rules.
        let (rules, _) = classify(
            &label("2s2.2p6 1S 0"),
            &label("2s2.2p5.(2P°<3/2>).3s 2[3/2]° 1"),
        );
        assert_eq!(rules, SelectionRules::ParityAndJ);
    }

    #[test]
    fn incomplete_labels_get_parity_and_j_rules_and_no_jump_flags() {
        // W I levels without configuration, Si I 3s2 3p nd levels (NIST ASD exports,
        // shared/reference-data): jumps cannot be judged, LS rules do not apply.
        let (rules, flags) = classify(&label("5d4.6s2 5D 1"), &label("#3° 2"));
        assert_eq!(rules, SelectionRules::ParityAndJ);
        assert_eq!(flags, TransitionFlags::default());
        let (_, flags) = classify(&label("3s2.3p2 3P 1"), &label("3s2.3p.nd #2° 2"));
        assert_eq!(flags, TransitionFlags::default());
        // Fe I a 5D – z 5F°: letters do not change the LS rules.
        let (rules, flags) = classify(
            &label("3d6.4s2 a 5D 4"),
            &label("3d6.(5D).4s.4p.(3P°) z 5F° 5"),
        );
        assert_eq!(rules, SelectionRules::Ls);
        assert!(!flags.intercombination && !flags.l_forbidden);
    }

    #[test]
    fn rule_names_round_trip() {
        for rules in [SelectionRules::Ls, SelectionRules::ParityAndJ] {
            assert_eq!(SelectionRules::from_name(rules.name()), Some(rules));
        }
    }
}
