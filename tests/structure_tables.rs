//! The level model against the sympy check tables in tests/data (copied from
//! shared/check-values; gen_check_values.py with sympy 1.14.0, its own exact
//! Slater-determinant code after Condon & Shortley 1935 and Slater 1960):
//! check-values/term_energies.csv, spin_orbit.csv and intermediate_coupling.csv.

use std::collections::BTreeMap;

use termsight::notation::Configuration;
use termsight::structure::{Level, LevelStructure, Orbital, ParameterId, Radial, Scope};

/// Rows of a check table as header → value maps, with their line numbers.
fn rows(text: &str) -> Vec<(usize, BTreeMap<String, String>)> {
    let mut lines = text
        .lines()
        .enumerate()
        .filter(|(_, l)| !l.starts_with('#'));
    let header: Vec<String> = lines
        .next()
        .unwrap()
        .1
        .split(',')
        .map(str::to_string)
        .collect();
    lines
        .map(|(i, l)| {
            let map = header
                .iter()
                .cloned()
                .zip(l.split(',').map(str::to_string))
                .collect();
            (i + 1, map)
        })
        .collect()
}

/// `-3/49*sqrt(21)`, `1/7`, `0`, `3/2` → f64.
fn number(text: &str) -> f64 {
    let (rational, root) = match text.split_once("*sqrt(") {
        Some((r, n)) => (r, n.trim_end_matches(')').parse::<f64>().unwrap().sqrt()),
        None => (text, 1.0),
    };
    let value = match rational.split_once('/') {
        Some((p, q)) => p.parse::<f64>().unwrap() / q.parse::<f64>().unwrap(),
        None => rational.parse::<f64>().unwrap(),
    };
    value * root
}

/// The configuration used for each table name: any n will do for pure angular
/// coefficients.
fn configuration(name: &str) -> &'static str {
    match name {
        "s.s'" => "2s.3s",
        "s.p" => "2s.2p",
        "s.d" => "3s.3d",
        "s.f" => "4s.4f",
        "p.p'" => "2p.3p",
        "p.d" => "3p.3d",
        "p.f" => "4p.4f",
        "d.d'" => "3d.4d",
        "d.f" => "4d.4f",
        "p2" => "2p2",
        "p3" => "2p3",
        "p4" => "2p4",
        "d2" => "3d2",
        "d3" => "3d3",
        other => panic!("no configuration for {other}"),
    }
}

fn orbitals(config: &Configuration) -> Vec<Orbital> {
    config
        .subshells()
        .map(|s| Orbital { n: s.n, l: s.l })
        .collect()
}

/// The parameter of a table column (`F^2`, `G^1`) in a one- or two-shell configuration.
fn column_parameter(config: &Configuration, column: &str) -> Option<ParameterId> {
    let o = orbitals(config);
    let k: u32 = column[2..].parse().ok()?;
    let (a, b) = (o[0], *o.last().unwrap());
    let radial = match &column[..1] {
        "F" if k > 0 => Radial::Direct { k, a, b },
        "G" if a != b => Radial::Exchange { k, a, b },
        _ => return None,
    };
    Some(ParameterId {
        scope: Scope::Configuration(0),
        radial,
    })
}

/// `zeta_p`, `zeta_d'` → ζ of the first or second shell of that letter.
fn zeta_parameter(config: &Configuration, column: &str) -> ParameterId {
    let o = orbitals(config);
    let letter = column.trim_start_matches("zeta_");
    let primed = letter.ends_with('\'');
    let l = "spdf".find(letter.trim_end_matches('\'')).unwrap() as u32;
    let matching: Vec<Orbital> = o.into_iter().filter(|x| x.l == l).collect();
    let a = if primed { matching[1] } else { matching[0] };
    ParameterId {
        scope: Scope::Configuration(0),
        radial: Radial::SpinOrbit { a },
    }
}

/// Term key used to match table rows. The two ²D of d³ (the only repeated term,
/// given as a 2×2 block by seniority) are `2D#1` (v = 1) and `2D#2` (v = 3) here.
fn term_key(term: &str, seniority: &str, block_size: &str) -> String {
    match (term, seniority, block_size) {
        ("2D", "1", "2") => "2D#1".into(),
        ("2D", "3", "2") => "2D#2".into(),
        ("2D(v=1)", _, _) => "2D#1".into(),
        ("2D(v=3)", _, _) => "2D#2".into(),
        _ => term.to_string(),
    }
}

/// The term of a basis state without the parity mark, e.g. `3P`, `2D#1`.
fn state_term(structure: &LevelStructure, block: usize, state: usize) -> String {
    let term = structure.state_label(block, state).term;
    let mut text = format!(
        "{}{}",
        term.multiplicity,
        "SPDFGHIKLMN".as_bytes()[term.l as usize] as char
    );
    if let Some(i) = term.index {
        text.push_str(&format!("#{i}"));
    }
    text
}

/// Half-integer text → doubled.
fn twice(text: &str) -> u32 {
    match text.split_once('/') {
        Some((p, _)) => p.parse().unwrap(),
        None => 2 * text.parse::<u32>().unwrap(),
    }
}

#[test]
fn pure_ls_coefficients_match_term_energies() {
    let table = include_str!("data/check-values/term_energies.csv");
    let all = rows(table);
    let columns = [
        "F^2", "F^4", "F^6", "G^0", "G^1", "G^2", "G^3", "G^4", "G^5", "G^6",
    ];
    let mut configs: Vec<String> = all.iter().map(|(_, r)| r["config"].clone()).collect();
    configs.dedup();
    let mut checked = 0;
    for name in configs {
        let config: Configuration = configuration(&name).parse().unwrap();
        let structure = LevelStructure::build(std::slice::from_ref(&config), &[]).unwrap();
        let block = &structure.blocks()[0];
        let table_rows: Vec<_> = all.iter().filter(|(_, r)| r["config"] == name).collect();
        // Degeneracy-weighted average of each coefficient over the configuration
        // (the table keeps the raw coefficients; our matrices have it removed).
        let weight = |r: &BTreeMap<String, String>| {
            (2.0 * number(&r["L"]) + 1.0) * (2.0 * number(&r["S"]) + 1.0)
        };
        let diagonal =
            |r: &&&(usize, BTreeMap<String, String>)| r.1["block_row"] == r.1["block_col"];
        let n_det: f64 = table_rows
            .iter()
            .filter(diagonal)
            .map(|(_, r)| weight(r))
            .sum();
        assert_eq!(Some(n_det), block.determinant_count(0), "{name}");
        for column in columns {
            let Some(id) = column_parameter(&config, column) else {
                continue;
            };
            let average: f64 = table_rows
                .iter()
                .filter(diagonal)
                .map(|(_, r)| weight(r) * number(&r[column]))
                .sum::<f64>()
                / n_det;
            let p = structure.parameter_index(&id);
            for (line, r) in &table_rows {
                let want_raw = number(&r[column]);
                let row_key = term_key(
                    &r["term"],
                    r["seniority"].split(';').next().unwrap(),
                    &r["block_size"],
                );
                let col_key = term_key(
                    &r["term"],
                    r["seniority"].split(';').next_back().unwrap(),
                    &r["block_size"],
                );
                let want = if r["block_row"] == r["block_col"] {
                    want_raw - average
                } else {
                    want_raw
                };
                // Look the element up in every J block containing the term.
                let mut found = false;
                for j_block in &block.j_blocks {
                    let find = |key: &str| {
                        j_block
                            .states
                            .iter()
                            .position(|&s| state_term(&structure, 0, s) == key)
                    };
                    let (Some(x), Some(y)) = (find(&row_key), find(&col_key)) else {
                        continue;
                    };
                    let got = p.map_or(0.0, |p| {
                        j_block
                            .coefficients
                            .iter()
                            .find(|(q, _)| *q == p)
                            .map_or(0.0, |(_, m)| m[(x, y)])
                    });
                    if x == y {
                        assert!(
                            (got - want).abs() < 1e-10,
                            "line {line} {name} {column}: {got} vs {want}"
                        );
                    } else {
                        // The sign of the d³ ²D off-diagonal element is a phase
                        // convention (check-values README).
                        assert!(
                            (got.abs() - want.abs()).abs() < 1e-10,
                            "line {line} {column}: {got} vs {want}"
                        );
                    }
                    checked += 1;
                    found = true;
                }
                assert!(found, "line {line}: term {row_key} not in the basis");
            }
        }
    }
    assert!(checked > 500, "{checked}");
}

#[test]
fn pure_ls_energies_match_term_energies_for_random_parameters() {
    // ζ = 0, one configuration: the levels of each J are the term energies (the
    // eigenvalues of the d³ ²D block), to 1e-10 relative.
    let table = include_str!("data/check-values/term_energies.csv");
    let all = rows(table);
    let mut configs: Vec<String> = all.iter().map(|(_, r)| r["config"].clone()).collect();
    configs.dedup();
    let mut seed = 12345u64;
    let mut random = move || {
        seed = seed
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        1000.0 + 40000.0 * ((seed >> 11) as f64 / (1u64 << 53) as f64)
    };
    for name in configs {
        let config: Configuration = configuration(&name).parse().unwrap();
        let structure = LevelStructure::build(std::slice::from_ref(&config), &[]).unwrap();
        let mut values = vec![0.0; structure.parameters().len()];
        let mut by_column = BTreeMap::new();
        for (i, id) in structure.parameters().iter().enumerate() {
            if matches!(id.radial, Radial::Direct { .. } | Radial::Exchange { .. }) {
                values[i] = random();
                let column = match id.radial {
                    Radial::Direct { k, .. } => format!("F^{k}"),
                    Radial::Exchange { k, .. } => format!("G^{k}"),
                    _ => unreachable!(),
                };
                by_column.insert(column, values[i]);
            }
        }
        // Raw term energies from the table, by term key (2×2 block as a matrix).
        let rows_here: Vec<_> = all.iter().filter(|(_, r)| r["config"] == name).collect();
        let energy = |r: &BTreeMap<String, String>| -> f64 {
            by_column.iter().map(|(c, v)| number(&r[c]) * v).sum()
        };
        let mut expected: Vec<(u32, u32, f64)> = Vec::new(); // (L, 2S, E)
        let mut block_2d = [[0.0; 2]; 2];
        for (_, r) in &rows_here {
            let (l, two_s) = (number(&r["L"]) as u32, (2.0 * number(&r["S"])) as u32);
            if r["block_size"] == "1" {
                expected.push((l, two_s, energy(r)));
            } else {
                let i: usize = r["block_row"].parse().unwrap();
                let j: usize = r["block_col"].parse().unwrap();
                block_2d[i - 1][j - 1] = energy(r);
            }
        }
        if name == "d3" {
            let (a, b, c) = (block_2d[0][0], block_2d[1][1], block_2d[0][1]);
            let mean = (a + b) / 2.0;
            let half = (((a - b) / 2.0).powi(2) + c * c).sqrt();
            expected.push((2, 1, mean - half));
            expected.push((2, 1, mean + half));
        }
        let weight = |l: u32, s: u32| ((2 * l + 1) * (s + 1)) as f64;
        let centre: f64 = expected
            .iter()
            .map(|&(l, s, e)| weight(l, s) * e)
            .sum::<f64>()
            / expected.iter().map(|&(l, s, _)| weight(l, s)).sum::<f64>();
        let levels = structure.levels(&values).unwrap();
        let mut got_by_j: BTreeMap<u32, Vec<f64>> = BTreeMap::new();
        for level in &levels {
            got_by_j
                .entry(level.j.twice)
                .or_default()
                .push(level.energy_cm1);
        }
        let mut want_by_j: BTreeMap<u32, Vec<f64>> = BTreeMap::new();
        for &(l, s, e) in &expected {
            let mut j = (2 * l).abs_diff(s);
            while j <= 2 * l + s {
                want_by_j.entry(j).or_default().push(e - centre);
                j += 2;
            }
        }
        for v in want_by_j.values_mut() {
            v.sort_by(f64::total_cmp);
        }
        assert_eq!(
            got_by_j.keys().collect::<Vec<_>>(),
            want_by_j.keys().collect::<Vec<_>>(),
            "{name}"
        );
        for (j, got) in &got_by_j {
            assert_eq!(got.len(), want_by_j[j].len(), "{name} 2J={j}: level count");
            for (g, w) in got.iter().zip(&want_by_j[j]) {
                let scale = w.abs().max(1.0);
                assert!(
                    (g - w).abs() <= 1e-10 * scale.max(1e4),
                    "{name} 2J={j}: {g} vs {w}"
                );
            }
        }
    }
}

#[test]
fn first_order_spin_orbit_matches_table() {
    let table = include_str!("data/spin_orbit.csv");
    let all = rows(table);
    let mut configs: Vec<String> = all.iter().map(|(_, r)| r["config"].clone()).collect();
    configs.dedup();
    let mut checked = 0;
    for name in configs {
        let config: Configuration = configuration(&name).parse().unwrap();
        let structure = LevelStructure::build(std::slice::from_ref(&config), &[]).unwrap();
        let block = &structure.blocks()[0];
        for (line, r) in all.iter().filter(|(_, r)| r["config"] == name) {
            let two_j = twice(&r["J"]);
            let j_block = block.j_blocks.iter().find(|b| b.two_j == two_j).unwrap();
            let seniority: Vec<&str> = r["seniority"].split(';').collect();
            let row_key = term_key(&r["term"], seniority[0], &r["block_size"]);
            let col_key = term_key(&r["term"], seniority[seniority.len() - 1], &r["block_size"]);
            let find = |key: &str| {
                j_block
                    .states
                    .iter()
                    .position(|&s| state_term(&structure, 0, s) == key)
                    .unwrap_or_else(|| panic!("line {line}: no {key}"))
            };
            let (x, y) = (find(&row_key), find(&col_key));
            for (zeta, coefficient) in [("zeta1", "coeff_zeta1"), ("zeta2", "coeff_zeta2")] {
                if r[zeta].is_empty() {
                    continue;
                }
                let id = zeta_parameter(&config, &r[zeta]);
                let want = number(&r[coefficient]);
                let got = structure.parameter_index(&id).map_or(0.0, |p| {
                    j_block
                        .coefficients
                        .iter()
                        .find(|(q, _)| *q == p)
                        .map_or(0.0, |(_, m)| m[(x, y)])
                });
                if x == y {
                    assert!((got - want).abs() < 1e-12, "line {line}: {got} vs {want}");
                } else {
                    assert!(
                        (got.abs() - want.abs()).abs() < 1e-12,
                        "line {line}: {got} vs {want}"
                    );
                }
                checked += 1;
            }
        }
    }
    assert!(checked >= 133, "{checked}");
}

/// Parameter values from `F^2=50000;zeta_p=2000`.
fn values_from(structure: &LevelStructure, config: &Configuration, text: &str) -> Vec<f64> {
    let mut values = vec![0.0; structure.parameters().len()];
    for item in text.split(';') {
        let (name, value) = item.split_once('=').unwrap();
        let id = if name.starts_with("zeta") {
            zeta_parameter(config, name)
        } else {
            column_parameter(config, name).unwrap()
        };
        let p = structure.parameter_index(&id).unwrap();
        values[p] = value.parse().unwrap();
    }
    values
}

#[test]
fn intermediate_coupling_matches_every_row() {
    let table = include_str!("data/intermediate_coupling.csv");
    let all = rows(table);
    let mut configs: Vec<String> = all.iter().map(|(_, r)| r["config"].clone()).collect();
    configs.dedup();
    let mut checked = 0;
    for name in configs {
        let rows_here: Vec<_> = all.iter().filter(|(_, r)| r["config"] == name).collect();
        let config: Configuration = configuration(&name).parse().unwrap();
        let structure = LevelStructure::build(std::slice::from_ref(&config), &[]).unwrap();
        let values = values_from(&structure, &config, &rows_here[0].1["parameters"]);
        let levels = structure.levels(&values).unwrap();
        // The table keeps the raw F^k (no average removed): compare separations
        // from the centre of gravity Σ(2J+1)E/Σ(2J+1).
        let weights: Vec<f64> = rows_here
            .iter()
            .map(|(_, r)| twice(&r["J"]) as f64 + 1.0)
            .collect();
        let centre: f64 = rows_here
            .iter()
            .zip(&weights)
            .map(|((_, r), w)| w * number(&r["energy"]))
            .sum::<f64>()
            / weights.iter().sum::<f64>();
        assert_eq!(levels.len(), rows_here.len(), "{name}");
        for (line, r) in &rows_here {
            let two_j = twice(&r["J"]);
            let want = number(&r["energy"]) - centre;
            let level: &Level = levels
                .iter()
                .filter(|l| l.j.twice == two_j)
                .min_by(|a, b| {
                    (a.energy_cm1 - want)
                        .abs()
                        .total_cmp(&(b.energy_cm1 - want).abs())
                })
                .unwrap();
            // 17 significant digits in the table; double precision here.
            assert!(
                (level.energy_cm1 - want).abs() < 1e-9 * want.abs().max(1e3),
                "line {line}: {} vs {want}",
                level.energy_cm1
            );
            for item in r["composition_percent"].split(';') {
                let (term, percent) = item.split_once(':').unwrap();
                let key = term_key(term, "", "");
                let got: f64 = level
                    .composition
                    .iter()
                    .filter(|c| state_term(&structure, level.block, c.state) == key)
                    .map(|c| c.percent)
                    .sum();
                // Percentages are printed to 6 decimals.
                assert!(
                    (got - number(percent)).abs() < 2e-6,
                    "line {line} {term}: {got} vs {percent}"
                );
            }
            checked += 1;
        }
    }
    assert_eq!(checked, 59);
}

#[test]
fn lande_interval_rule_holds_for_every_term() {
    // First-order spin–orbit energies of a term obey the Landé interval rule
    // E(J) − E(J−1) = A·J (Landé 1923; common practice), with A as tabulated
    // in spin_orbit.csv (`lande_A_coeff_zetaN`, sympy).
    let table = include_str!("data/spin_orbit.csv");
    let all = rows(table);
    let mut checked = 0;
    let mut configs: Vec<String> = all.iter().map(|(_, r)| r["config"].clone()).collect();
    configs.dedup();
    for name in configs {
        let config: Configuration = configuration(&name).parse().unwrap();
        let structure = LevelStructure::build(std::slice::from_ref(&config), &[]).unwrap();
        let block = &structure.blocks()[0];
        let terms: Vec<_> = all
            .iter()
            .filter(|(_, r)| {
                r["config"] == name
                    && r["block_size"] == "1"
                    && !r["lande_A_coeff_zeta1"].is_empty()
            })
            .collect();
        let mut by_term: BTreeMap<String, Vec<&BTreeMap<String, String>>> = BTreeMap::new();
        for (_, r) in &terms {
            by_term.entry(r["term"].clone()).or_default().push(r);
        }
        for (term, rows_of_term) in by_term {
            for (zeta, a_column) in [
                ("zeta1", "lande_A_coeff_zeta1"),
                ("zeta2", "lande_A_coeff_zeta2"),
            ] {
                let first = rows_of_term[0];
                if first[zeta].is_empty() || first[a_column].is_empty() {
                    continue;
                }
                let id = zeta_parameter(&config, &first[zeta]);
                let a = number(&first[a_column]);
                // Our diagonal coefficient of ζ at each J of the term.
                let mut by_j: Vec<(u32, f64)> = Vec::new();
                for j_block in &block.j_blocks {
                    let Some(x) = j_block
                        .states
                        .iter()
                        .position(|&s| state_term(&structure, 0, s) == term)
                    else {
                        continue;
                    };
                    let c = structure.parameter_index(&id).map_or(0.0, |p| {
                        j_block
                            .coefficients
                            .iter()
                            .find(|(q, _)| *q == p)
                            .map_or(0.0, |(_, m)| m[(x, x)])
                    });
                    by_j.push((j_block.two_j, c));
                }
                for pair in by_j.windows(2) {
                    let (j_high, e_high) = pair[1];
                    let (_, e_low) = pair[0];
                    let want = a * j_high as f64 / 2.0;
                    assert!(
                        (e_high - e_low - want).abs() < 1e-12,
                        "{name} {term}: {} vs {want}",
                        e_high - e_low
                    );
                    checked += 1;
                }
            }
        }
    }
    assert!(checked > 60, "{checked}");
}
