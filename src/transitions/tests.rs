//! Tests of the transitions module: the fast operator against a plain sum over
//! all magnetic sub-states, and the physics against textbook values.

use std::collections::HashMap;

use proptest::prelude::*;

use super::operator::{CommonLayout, apply, hops};
use super::*;
use crate::notation::{Configuration, Term};
use crate::structure::{
    Determinant, Level, LevelStructure, ParameterId, Radial, Scope, SpinOrbitalLayout,
};

fn configs(labels: &[&str]) -> Vec<Configuration> {
    labels.iter().map(|c| c.parse().unwrap()).collect()
}

/// A small deterministic generator (64-bit LCG, Knuth's MMIX constants) for
/// parameter values in tests.
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }

    fn range(&mut self, low: f64, high: f64) -> f64 {
        low + (high - low) * self.next()
    }
}

/// Values for every parameter: E_av from `eav` per configuration, the rest from
/// `other`.
fn values(
    structure: &LevelStructure,
    eav: &[f64],
    mut other: impl FnMut(&ParameterId) -> f64,
) -> Vec<f64> {
    structure
        .parameters()
        .iter()
        .map(|p| match (p.radial, p.scope) {
            (Radial::Average, Scope::Configuration(c)) => eav[c],
            _ => other(p),
        })
        .collect()
}

// ---------------------------------------------------------------------------
// The slow, plainly correct path: every M of every level by explicit lowering,
// S = Σ_{M,M',q} |⟨γJM|D_q|γ'J'M'⟩|².

/// J₋ = Σ_i (l₋(i) + s₋(i)) on a vector of determinants (Condon & Shortley 1935,
/// §3³: l₋|l m⟩ = √(l(l+1) − m(m−1)) |l m−1⟩).
fn lower(layout: &SpinOrbitalLayout, vector: &[(Determinant, f64)]) -> Vec<(Determinant, f64)> {
    let mut out: HashMap<Determinant, f64> = HashMap::new();
    for (det, c) in vector {
        for r in det.occupied() {
            let s = layout.spin_orbital(r);
            let l = s.l as f64;
            let m = s.m_l as f64;
            if s.m_l > -(s.l as i32) {
                let p = layout.index(s.shell, s.m_l - 1, s.two_m_s);
                if let Some((sign, d)) = det.excite(r, p) {
                    *out.entry(d).or_default() += c * sign * (l * (l + 1.0) - m * (m - 1.0)).sqrt();
                }
            }
            if s.two_m_s == 1 {
                let p = layout.index(s.shell, s.m_l, -1);
                if let Some((sign, d)) = det.excite(r, p) {
                    *out.entry(d).or_default() += c * sign;
                }
            }
        }
    }
    let norm: f64 = out.values().map(|c| c * c).sum::<f64>().sqrt();
    out.into_iter()
        .filter(|(_, c)| c.abs() > 1e-14)
        .map(|(d, c)| (d, c / norm))
        .collect()
}

/// The level at every M = J, J−1, …, −J on the common determinants.
fn every_m(
    structure: &LevelStructure,
    common: &CommonLayout,
    side: usize,
    level: &Level,
) -> Vec<Vec<(Determinant, f64)>> {
    let top = common.vector_to_common(side, &structure.level_in_determinants(level));
    let mut states = vec![top];
    for _ in 0..level.j.twice {
        let next = lower(&common.layout, states.last().unwrap());
        states.push(next);
    }
    states
}

/// Σ_{M,M',q} |⟨even M|D_q|odd M'⟩|² with the given dipole integral values.
fn slow_strength(
    even: &[Vec<(Determinant, f64)>],
    odd: &[Vec<(Determinant, f64)>],
    two_j_even: u32,
    two_j_odd: u32,
    hop_table: &[[Vec<operator::Hop>; 3]],
    integral_values: &[f64],
) -> f64 {
    let n = integral_values.len();
    let mut total = 0.0;
    for (i_odd, odd_state) in odd.iter().enumerate() {
        let two_m_odd = two_j_odd as i32 - 2 * i_odd as i32;
        for q in -1..=1 {
            let two_m_even = two_m_odd + 2 * q;
            if two_m_even.unsigned_abs() > two_j_even {
                continue;
            }
            let i_even = ((two_j_even as i32 - two_m_even) / 2) as usize;
            let (index, image) = apply(odd_state, hop_table, q, n);
            let mut amplitude = 0.0;
            for (det, c) in &even[i_even] {
                if let Some(&row) = index.get(det) {
                    for k in 0..n {
                        amplitude += c * image[row * n + k] * integral_values[k];
                    }
                }
            }
            total += amplitude * amplitude;
        }
    }
    total
}

/// Compare every line of the fast path with the slow path.
fn check_against_slow_path(
    labels: &[&str],
    interactions: &[(usize, usize)],
    seed: u64,
    dipole_values: impl Fn(&DipoleIntegral) -> f64,
) {
    let structure = LevelStructure::build(&configs(labels), interactions).unwrap();
    let mut rng = Lcg(seed);
    let eav: Vec<f64> = (0..labels.len())
        .map(|c| 10_000.0 * c as f64 + rng.range(0.0, 3_000.0))
        .collect();
    let values = values(&structure, &eav, |p| match p.radial {
        Radial::SpinOrbit { .. } => rng.range(200.0, 2_000.0),
        Radial::Interaction { .. } => rng.range(-3_000.0, 3_000.0),
        _ => rng.range(1_000.0, 20_000.0),
    });
    let operator = DipoleOperator::build(&structure).unwrap();
    let dipole: Vec<f64> = operator.integrals().iter().map(&dipole_values).collect();
    let spectrum = model_spectrum(&structure, &operator, &values, &dipole).unwrap();
    let (even_block, odd_block) = operator.blocks().unwrap();
    let blocks = [
        &structure.blocks()[even_block],
        &structure.blocks()[odd_block],
    ];
    let common = CommonLayout::new(&structure, blocks).unwrap();
    let (hop_table, all_integrals) = hops(&common.layout);
    let integral_values: Vec<f64> = all_integrals.iter().map(&dipole_values).collect();
    let levels: Vec<&Level> = spectrum.levels.iter().map(|l| &l.level).collect();
    let states: Vec<Vec<Vec<(Determinant, f64)>>> = levels
        .iter()
        .map(|l| every_m(&structure, &common, usize::from(l.block == odd_block), l))
        .collect();
    let mut compared = 0;
    let mut strongest: f64 = 0.0;
    for (e, even) in levels.iter().enumerate() {
        if even.block != even_block {
            continue;
        }
        for (o, odd) in levels.iter().enumerate() {
            if odd.block != odd_block {
                continue;
            }
            let (two_je, two_jo) = (even.j.twice, odd.j.twice);
            if two_je.abs_diff(two_jo) > 2 || (two_je == 0 && two_jo == 0) {
                continue;
            }
            let slow = slow_strength(
                &states[e],
                &states[o],
                two_je,
                two_jo,
                &hop_table,
                &integral_values,
            );
            let fast = spectrum
                .lines
                .iter()
                .find(|l| (l.lower, l.upper) == (e, o) || (l.lower, l.upper) == (o, e))
                .map_or(0.0, |l| l.strength);
            strongest = strongest.max(slow);
            assert!(
                (slow - fast).abs() <= 1e-9 * slow.max(1.0),
                "{} – {}: slow {slow}, fast {fast}",
                spectrum.levels[e].label,
                spectrum.levels[o].label
            );
            compared += 1;
        }
    }
    assert!(compared > 0 && strongest > 0.1, "{compared} {strongest}");
}

#[test]
fn line_strengths_equal_the_sum_over_all_magnetic_substates() {
    // The fast path (Wigner–Eckart at stretched states, then 6j recoupling) against
    // the definition S = Σ_{M,M',q} |⟨γJM|D_q|γ'J'M'⟩|² (Condon & Shortley 1935,
    // §9⁴), with every M made by explicit lowering. Two-electron configurations with
    // configuration interaction in both parities and spin–orbit everywhere; the
    // dipole integrals have different signs so that mixed states interfere.
    check_against_slow_path(
        &["3s2", "3p2", "3s.3d", "3s.3p", "3p.3d"],
        &[(0, 1), (1, 2)],
        7,
        |p| match p.to_string().as_str() {
            "P(3s,3p)" => -2.3,
            "P(3p,3d)" => 3.1,
            _ => 0.0,
        },
    );
}

#[test]
fn line_strengths_with_a_core_open_in_one_parity_only() {
    // Na-like with a core-excited configuration: 2p is closed in every even
    // configuration and open in the odd 2p5.3s2, so the even states get the 2p
    // core put back in front of their determinants.
    check_against_slow_path(
        &["2p6.3s", "2p6.3d", "2p6.3p", "2p5.3s2"],
        &[],
        11,
        |p| match p.to_string().as_str() {
            "P(3s,3p)" => -4.0,
            "P(3p,3d)" => 4.5,
            "P(2p,3s)" => 0.4,
            "P(2p,3d)" => -0.3,
            _ => 0.0,
        },
    );
}

#[test]
fn line_strengths_with_three_open_subshells() {
    // 3d.4s.4p – 3d.4s2 and 3d2.4s: parent terms coupled in order, ζ in all three.
    check_against_slow_path(&["3d.4s2", "3d2.4s", "3d.4s.4p"], &[(0, 1)], 5, |p| match p
        .to_string()
        .as_str()
    {
        "P(4s,4p)" => 4.2,
        "P(3d,4p)" => -1.7,
        _ => 0.0,
    });
}

// ---------------------------------------------------------------------------
// Pure LS: relative strengths within multiplets.

/// J from the check table: `1` or `3/2`, as twice its value.
fn twice(text: &str) -> u32 {
    match text.split_once('/') {
        Some((p, "2")) => p.parse().unwrap(),
        _ => 2 * text.parse::<u32>().unwrap(),
    }
}

fn ls_term(label: &crate::levels::LevelLabel) -> (u32, u32) {
    match label.term {
        Term::Ls(t) => (t.multiplicity, t.l),
        _ => panic!("not LS"),
    }
}

#[test]
fn multiplet_components_have_the_tabulated_relative_strengths() {
    // S(J,J') ∝ (2J+1)(2J'+1){L J S; J' L' 1}² (Condon & Shortley 1935, §9³),
    // tabulated by sympy in check-values/multiplet_strengths.csv. Models with
    // ζ = 0 are pure LS. The multiplet sum for one jumping electron beside s
    // spectators is (2S+1)·l_>·P² (Sobelman 1979, §9.3; from memory, and it follows
    // from |⟨l‖C¹‖l'⟩|² = l_>).
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/check-values/multiplet_strengths.csv"
    );
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_path(path)
        .unwrap();
    let header = reader.headers().unwrap().clone();
    let column = |name: &str| header.iter().position(|h| h == name).unwrap();
    let rows: Vec<csv::StringRecord> = reader.records().map(|r| r.unwrap()).collect();
    // The model of each multiplet: two configurations, and the multiplet sum
    // (2S+1)·l_>·P² where it applies (P = 1.3 bohr).
    let models: [(&str, [&str; 2], Option<f64>); 7] = [
        ("3S-3P", ["1s.2s", "1s.2p"], Some(3.0)),
        ("3P-3D", ["1s.2p", "1s.3d"], Some(6.0)),
        ("3D-3F", ["1s.3d", "1s.4f"], Some(9.0)),
        ("3P-3P", ["1s.2p", "2p.3p"], None),
        ("2S-2P", ["2s", "2p"], Some(2.0)),
        ("2P-2D", ["2p", "3d"], Some(4.0)),
        ("4D-4F", ["1s.2s.3d", "1s.2s.4f"], None),
    ];
    let p = 1.3;
    let mut checked = 0;
    for (name, labels, sum) in models {
        let structure = LevelStructure::build(&configs(&labels), &[]).unwrap();
        let values = values(&structure, &[0.0, 40_000.0], |id| match id.radial {
            Radial::SpinOrbit { .. } => 0.0,
            _ => 2_000.0,
        });
        let operator = DipoleOperator::build(&structure).unwrap();
        let dipole = vec![p; operator.integrals().len()];
        let spectrum = model_spectrum(&structure, &operator, &values, &dipole).unwrap();
        let mine: Vec<&csv::StringRecord> = rows.iter().filter(|r| &r[0] == name).collect();
        let multiplicity = twice(&mine[0][column("S")]) + 1;
        let (l, lp) = (
            mine[0][column("L")].parse::<u32>().unwrap(),
            mine[0][column("Lp")].parse::<u32>().unwrap(),
        );
        // Strength of the component J – J' (the L term on the first configuration).
        let component = |two_j: u32, two_jp: u32| -> f64 {
            spectrum
                .lines
                .iter()
                .filter(|line| {
                    let (a, b) = (&spectrum.levels[line.lower], &spectrum.levels[line.upper]);
                    let (first, second) = if a.level.configuration == 0 {
                        (a, b)
                    } else {
                        (b, a)
                    };
                    ls_term(&first.label) == (multiplicity, l)
                        && ls_term(&second.label) == (multiplicity, lp)
                        && first.label.j.twice == two_j
                        && second.label.j.twice == two_jp
                })
                .map(|line| line.strength)
                .sum()
        };
        let total: f64 = mine
            .iter()
            .map(|r| component(twice(&r[column("J")]), twice(&r[column("Jp")])))
            .sum();
        for row in &mine {
            let s = component(twice(&row[column("J")]), twice(&row[column("Jp")]));
            let expected: f64 = row[column("fraction_of_multiplet_float")].parse().unwrap();
            assert!(
                (s / total - expected).abs() < 1e-10,
                "{name} J={} J'={}: {} vs {expected}",
                &row[column("J")],
                &row[column("Jp")],
                s / total
            );
            checked += 1;
        }
        if let Some(sum) = sum {
            assert!((total - sum * p * p).abs() < 1e-9, "{name}: Σ S = {total}");
        }
    }
    assert_eq!(checked, rows.len());
}

// ---------------------------------------------------------------------------
// Intermediate coupling.

#[test]
fn intercombination_to_resonance_ratio_is_tan_squared_of_the_mixing_angle() {
    // ns² ¹S₀ – ns np ³P₁ and ¹P₁. In ns np the J = 1 block on (³P₁, ¹P₁) is
    // [[E_av − G¹/6 − ζ/2, ζ/√2], [ζ/√2, E_av + G¹/2]] (Condon & Shortley 1935,
    // §11⁴, the sp configuration, with ³P = F⁰ − G¹/3 and ¹P = F⁰ + G¹/3 measured
    // from E_av = F⁰ − G¹/6; the off-diagonal sign is a phase convention). Only
    // the ¹P₁ component reaches ¹S₀, so S(³P₁)/S(¹P₁) = tan²θ with
    // tan 2θ = 2(ζ/√2)/(E(¹P) − E(³P)) on the diagonal.
    for (g1, zeta) in [(9_000.0, 60.0), (3_000.0, 800.0), (1_200.0, 2_500.0)] {
        let structure = LevelStructure::build(&configs(&["3s2", "3s.3p"]), &[]).unwrap();
        let values = values(&structure, &[0.0, 35_000.0], |id| match id.radial {
            Radial::SpinOrbit { .. } => zeta,
            Radial::Exchange { .. } => g1,
            _ => 0.0,
        });
        let operator = DipoleOperator::build(&structure).unwrap();
        let spectrum = model_spectrum(&structure, &operator, &values, &[-2.4]).unwrap();
        let line = |term: &str| {
            spectrum
                .lines
                .iter()
                .find(|l| spectrum.levels[l.upper].label.to_string() == term)
                .unwrap()
        };
        let (triplet, singlet) = (line("3s.3p 3P° 1"), line("3s.3p 1P° 1"));
        let (a, c, b) = (-g1 / 6.0 - zeta / 2.0, g1 / 2.0, zeta / 2f64.sqrt());
        let theta = 0.5 * (2.0 * b).atan2(c - a);
        let ratio = triplet.strength / singlet.strength;
        assert!(
            (ratio - theta.tan().powi(2)).abs() < 1e-10 * ratio.max(1e-6),
            "G1 {g1}, ζ {zeta}: {ratio} vs {}",
            theta.tan().powi(2)
        );
        // The two strengths share S(¹S₀ – ¹P₁) of pure LS, 2P² (the sum rule).
        assert!((triplet.strength + singlet.strength - 2.0 * 2.4 * 2.4).abs() < 1e-9);
        assert!(triplet.flags.intercombination && !singlet.flags.intercombination);
        // The levels are the eigenvalues of the same 2×2 block.
        let root = ((a - c).powi(2) / 4.0 + b * b).sqrt();
        let lower_level = spectrum.levels[triplet.upper].level.energy_cm1;
        assert!((lower_level - (35_000.0 + (a + c) / 2.0 - root)).abs() < 1e-8);
    }
    // ζ = 0: the intercombination line has no strength at all.
    let structure = LevelStructure::build(&configs(&["3s2", "3s.3p"]), &[]).unwrap();
    let values = values(&structure, &[0.0, 35_000.0], |id| match id.radial {
        Radial::Exchange { .. } => 9_000.0,
        _ => 0.0,
    });
    let operator = DipoleOperator::build(&structure).unwrap();
    let spectrum = model_spectrum(&structure, &operator, &values, &[-2.4]).unwrap();
    let intercombination = spectrum
        .lines
        .iter()
        .find(|l| spectrum.levels[l.upper].label.to_string() == "3s.3p 3P° 1")
        .unwrap();
    assert!(
        intercombination.strength < 1e-25,
        "{}",
        intercombination.strength
    );
}

/// Σ S over every line from each level of `lower` (configuration 0) to every level
/// of configuration 1, and the grand total.
fn strength_sums(values_zeta: (f64, f64), other: &[f64; 6]) -> (Vec<f64>, f64) {
    let structure = LevelStructure::build(&configs(&["3p2", "3p.3d"]), &[]).unwrap();
    let mut iter = other.iter().copied().cycle();
    let values = values(&structure, &[0.0, 60_000.0], |id| {
        match (id.radial, id.scope) {
            (Radial::SpinOrbit { .. }, Scope::Configuration(0)) => values_zeta.0,
            (Radial::SpinOrbit { .. }, _) => values_zeta.1,
            _ => iter.next().unwrap_or(0.0),
        }
    });
    let operator = DipoleOperator::build(&structure).unwrap();
    let spectrum = model_spectrum(&structure, &operator, &values, &[2.7]).unwrap();
    let lower_levels: Vec<usize> = (0..spectrum.levels.len())
        .filter(|&i| spectrum.levels[i].level.configuration == 0)
        .collect();
    let per_level = lower_levels
        .iter()
        .map(|&i| {
            spectrum
                .lines
                .iter()
                .filter(|l| l.lower == i || l.upper == i)
                .map(|l| l.strength)
                .sum()
        })
        .collect();
    let total = spectrum.lines.iter().map(|l| l.strength).sum();
    (per_level, total)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 24, rng_seed: proptest::test_runner::RngSeed::Fixed(4), ..ProptestConfig::default() })]

    #[test]
    fn strength_sums_do_not_depend_on_the_coupling(
        zeta_lower in 0.0f64..3_000.0,
        zeta_upper in 0.0f64..3_000.0,
        slater in proptest::array::uniform6(500.0f64..30_000.0),
    ) {
        // The sum rule: Σ S over all lines from one level to every level of a
        // configuration does not depend on how that configuration is coupled, and
        // the sum over the whole transition array does not depend on the coupling
        // of either (Condon & Shortley 1935, §9⁵; the trace of D·D† over a complete
        // set of states).
        let reference_slater = [10_000.0; 6];
        let (per_level, total) = strength_sums((zeta_lower, zeta_upper), &slater);
        let (_, total_ls) = strength_sums((0.0, 0.0), &reference_slater);
        prop_assert!((total - total_ls).abs() < 1e-8 * total_ls, "{} {}", total, total_ls);
        // Same lower configuration (same ζ and F², so the same lower levels), the
        // upper configuration in pure LS instead: the sum from each level is the same.
        let mut lower_same = reference_slater;
        lower_same[0] = slater[0];
        let (per_level_mixed, _) = strength_sums((zeta_lower, zeta_upper), &lower_same);
        let (per_level_ls, _) = strength_sums((zeta_lower, 0.0), &lower_same);
        for (a, b) in per_level_mixed.iter().zip(&per_level_ls) {
            prop_assert!((a - b).abs() < 1e-8 * b.max(1.0), "{} {}", a, b);
        }
        prop_assert_eq!(per_level.len(), 5);
    }
}

// ---------------------------------------------------------------------------
// Hydrogen.

/// ⟨a|r|b⟩ for hydrogen from the radial module's exact hydrogenic orbitals.
fn hydrogen_dipole(p: &DipoleIntegral) -> f64 {
    use crate::radial::hydrogenic::hydrogenic_orbital;
    use crate::radial::{GridSpec, RadialGrid};
    let grid = RadialGrid::new(
        1.0,
        GridSpec {
            r_max_bohr: 120.0,
            ..GridSpec::default()
        },
    )
    .unwrap();
    let a = hydrogenic_orbital(&grid, p.a.n, p.a.l, 1.0).unwrap();
    let b = hydrogenic_orbital(&grid, p.b.n, p.b.l, 1.0).unwrap();
    grid.integrate_product_power(&a, &b, 1)
}

#[test]
fn hydrogen_oscillator_strengths() {
    // Absorption f-values of H I, non-relativistic with infinite nuclear mass, from
    // the standard hydrogenic tables (Bethe & Salpeter 1957, table 15), values
    // written from memory: Lyman α 1s–2p 0.4162, Lyman β 1s–3p 0.07910, 2s–3p
    // 0.4349, 2p–3s 0.01359, 2p–3d 0.6958, and the Balmer α total n = 2 → 3,
    // 0.6407. (The compilation of Wiese & Fuhr 2009, J. Phys. Chem. Ref. Data 38,
    // 565, gives 0.41641 and 0.079142: the same values times the reduced-mass
    // factor 1 + m_e/m_p = 1.000545, which this model, with R∞, leaves out.)
    let labels = ["1s", "2s", "2p", "3s", "3p", "3d"];
    let structure = LevelStructure::build(&configs(&labels), &[]).unwrap();
    let n = [1.0, 2.0, 2.0, 3.0, 3.0, 3.0];
    let eav: Vec<f64> = n
        .iter()
        .map(|n: &f64| -crate::units::constants::RYDBERG_INFINITY_CM1 / (n * n))
        .collect();
    let values = values(&structure, &eav, |_| 0.0);
    let operator = DipoleOperator::build(&structure).unwrap();
    let dipole: Vec<f64> = operator.integrals().iter().map(hydrogen_dipole).collect();
    let spectrum = model_spectrum(&structure, &operator, &values, &dipole).unwrap();
    // Statistical weight 2(2l+1) of a one-electron configuration.
    let weight = |c: usize| -> f64 {
        let l = ["s", "p", "d"]
            .iter()
            .position(|x| labels[c].ends_with(x))
            .unwrap();
        2.0 * (2 * l + 1) as f64
    };
    // f of configuration a → b: Σ gf over the lines between them / g(a).
    let f = |a: usize, b: usize| -> f64 {
        let gf: f64 = spectrum
            .lines
            .iter()
            .filter(|l| {
                let pair = (
                    spectrum.levels[l.lower].level.configuration,
                    spectrum.levels[l.upper].level.configuration,
                );
                pair == (a, b)
            })
            .map(|l| l.gf)
            .sum();
        gf / weight(a)
    };
    for (a, b, expected, tolerance) in [
        (0, 2, 0.4162, 5e-5),
        (0, 4, 0.07910, 1e-5),
        (1, 4, 0.4349, 1e-4),
        (2, 3, 0.01359, 1e-5),
        (2, 5, 0.6958, 1e-4),
    ] {
        let value = f(a, b);
        assert!(
            (value - expected).abs() < tolerance,
            "{} – {}: f = {value}, expected {expected}",
            labels[a],
            labels[b]
        );
    }
    // Balmer α: Σ g f over 2s, 2p → 3s, 3p, 3d divided by g(n = 2) = 8.
    let gf_total: f64 = [(1, 4), (2, 3), (2, 5)]
        .iter()
        .map(|&(a, b)| f(a, b) * weight(a))
        .sum();
    assert!((gf_total / 8.0 - 0.6407).abs() < 1e-4, "{}", gf_total / 8.0);
    // Lyman α A-value 6.2649e8 s⁻¹ (Wiese & Fuhr 2009; from memory), which with
    // infinite nuclear mass becomes 6.2649e8 × 1.000545 = 6.268e8 s⁻¹ (A ∝ μ):
    // every 2p level decays to 1s at that rate.
    for line in spectrum.lines.iter().filter(|l| {
        spectrum.levels[l.lower].level.configuration == 0
            && spectrum.levels[l.upper].level.configuration == 2
    }) {
        assert!(
            (line.a_per_s / 6.268e8 - 1.0).abs() < 2e-4,
            "{}",
            line.a_per_s
        );
    }
}

// ---------------------------------------------------------------------------
// Selection rules, labels, errors.

#[test]
fn no_line_breaks_parity_or_delta_j_and_no_zero_zero_line() {
    // The rigorous E1 rules (Condon & Shortley 1935, ch. 9): parity changes,
    // ΔJ = 0, ±1, never J = 0 – 0.
    let structure = LevelStructure::build(
        &configs(&["3s2", "3p2", "3s.3d", "3s.3p", "3p.3d", "3s.4f"]),
        &[(0, 1), (1, 2)],
    )
    .unwrap();
    let mut rng = Lcg(3);
    let values = values(
        &structure,
        &[0.0, 50_000.0, 40_000.0, 30_000.0, 70_000.0, 80_000.0],
        |_| rng.range(100.0, 9_000.0),
    );
    let operator = DipoleOperator::build(&structure).unwrap();
    assert_eq!(
        operator
            .integrals()
            .iter()
            .map(|i| i.to_string())
            .collect::<Vec<_>>(),
        vec!["P(3s,3p)", "P(3p,3d)", "P(3d,4f)"]
    );
    let spectrum = model_spectrum(&structure, &operator, &values, &[1.0, 2.0, 3.0]).unwrap();
    assert!(spectrum.lines.len() > 50);
    for line in &spectrum.lines {
        let (lower, upper) = (&spectrum.levels[line.lower], &spectrum.levels[line.upper]);
        assert_ne!(lower.level.parity, upper.level.parity);
        assert!(lower.level.j.twice.abs_diff(upper.level.j.twice) <= 2);
        assert!(lower.level.j.twice + upper.level.j.twice > 0);
        assert!(upper.energy_cm1 > lower.energy_cm1);
        assert!((line.wavenumber_cm1 - (upper.energy_cm1 - lower.energy_cm1)).abs() < 1e-6);
    }
    // 3s.4f – 3s2 moves 4f → 3s (Δl = 3) and 3s.4f – 3p2 two electrons: both
    // flagged, and each gets its strength only through mixing.
    let spectrum = &spectrum;
    let flagged = |config_a: usize, config_b: usize| {
        spectrum
            .lines
            .iter()
            .filter(move |l| {
                let mut pair = [
                    spectrum.levels[l.lower].level.configuration,
                    spectrum.levels[l.upper].level.configuration,
                ];
                pair.sort();
                pair == [config_a, config_b]
            })
            .collect::<Vec<_>>()
    };
    assert!(flagged(0, 5).iter().all(|l| l.flags.jump_forbidden));
    assert!(flagged(1, 5).iter().all(|l| l.flags.two_electron_jump));
    assert!(
        flagged(0, 3)
            .iter()
            .all(|l| !l.flags.jump_forbidden && !l.flags.two_electron_jump)
    );
    // Labels are unique.
    let mut labels: Vec<String> = spectrum
        .levels
        .iter()
        .map(|l| l.label.to_string())
        .collect();
    labels.sort();
    let count = labels.len();
    labels.dedup();
    assert_eq!(labels.len(), count);
}

#[test]
fn labels_stay_unique_when_two_levels_share_a_leading_component() {
    // 3s.3p with G¹ = 0 and a large ζ: ³P₁ and ¹P₁ mix strongly, yet each name is
    // used once (common practice, no source).
    let structure = LevelStructure::build(&configs(&["3s.3p"]), &[]).unwrap();
    for zeta in [10.0, 1_000.0, 100_000.0] {
        let values = values(&structure, &[0.0], |id| match id.radial {
            Radial::SpinOrbit { .. } => zeta,
            _ => 0.0,
        });
        let levels = structure.levels(&values).unwrap();
        let labels = unique_labels(&structure, &levels);
        let mut names: Vec<String> = labels.iter().map(|(l, _)| l.to_string()).collect();
        names.sort();
        assert_eq!(
            names,
            vec!["3s.3p 1P° 1", "3s.3p 3P° 0", "3s.3p 3P° 1", "3s.3p 3P° 2"]
        );
    }
}

#[test]
fn a_missing_dipole_integral_is_named() {
    let structure = LevelStructure::build(&configs(&["3s2", "3s.3p"]), &[]).unwrap();
    let operator = DipoleOperator::build(&structure).unwrap();
    let e = operator
        .values_from(&structure, &[])
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("P(3s,3p)") && e.contains("3s2") && e.contains("3s.3p"),
        "{e}"
    );
    let p: DipoleIntegral = "P(3s,3p)".parse().unwrap();
    assert_eq!(
        operator.values_from(&structure, &[(p, 2.0)]).unwrap(),
        vec![2.0]
    );
    // One parity only: no operator blocks, no lines.
    let even = LevelStructure::build(&configs(&["3s2", "3p2"]), &[]).unwrap();
    let operator = DipoleOperator::build(&even).unwrap();
    assert!(operator.blocks().is_none() && operator.integrals().is_empty());
    let values = vec![1.0; even.parameters().len()];
    assert!(
        model_spectrum(&even, &operator, &values, &[])
            .unwrap()
            .lines
            .is_empty()
    );
}
