//! The angular module against the sympy check tables in tests/data (copied from
//! shared/check-values, produced by gen_check_values.py with sympy 1.14.0:
//! `sympy.physics.wigner.wigner_3j` and `wigner_6j`; c^k from sympy `wigner_3j`).
//! Every row is compared exactly (sign and the rational square) and as a float
//! to 1e-12.

use num_bigint::BigInt;
use num_rational::BigRational;
use termsight::angular::{AngularError, SignedSqrt, ck_exact, six_j_exact, three_j_exact};

/// Rows of a check table: (line number, fields), comment and header skipped.
fn rows(text: &str) -> Vec<(usize, Vec<String>)> {
    text.lines()
        .enumerate()
        .filter(|(_, l)| !l.starts_with('#'))
        .skip(1)
        .map(|(i, l)| (i + 1, l.split(',').map(str::to_string).collect()))
        .collect()
}

/// `3/2` → 3, `2` → 4 (doubled).
fn twice(text: &str) -> i32 {
    match text.split_once('/') {
        Some((p, "2")) => p.parse().unwrap(),
        Some(_) => panic!("not a half-integer: {text}"),
        None => 2 * text.parse::<i32>().unwrap(),
    }
}

fn rational(text: &str) -> BigRational {
    match text.split_once('/') {
        Some((p, q)) => {
            BigRational::new(p.parse::<BigInt>().unwrap(), q.parse::<BigInt>().unwrap())
        }
        None => BigRational::from_integer(text.parse::<BigInt>().unwrap()),
    }
}

/// Compare an exact value with the table's `sign`, `square` and `float` columns.
fn check(line: usize, got: &SignedSqrt, sign: &str, square: &str, float: &str) {
    let want_square = rational(square);
    assert_eq!(got.square, want_square, "line {line}: square");
    if sign != "0" {
        assert_eq!(got.negative, sign == "-1", "line {line}: sign");
    }
    let want: f64 = float.parse().unwrap();
    assert!(
        (got.to_f64() - want).abs() <= 1e-12 * want.abs().max(1e-300),
        "line {line}: {} vs {want}",
        got.to_f64()
    );
}

#[test]
fn wigner_3j_matches_every_sympy_row() {
    let table = include_str!("data/check-values/wigner3j.csv");
    let mut checked = 0;
    let mut rejected = 0;
    for (line, f) in rows(table) {
        let j = [twice(&f[0]), twice(&f[1]), twice(&f[2])].map(|x| x as u32);
        let m = [twice(&f[3]), twice(&f[4]), twice(&f[5])];
        let result = three_j_exact(j, m);
        let out_of_range = j.iter().zip(m).any(|(j, m)| m.unsigned_abs() > *j);
        if out_of_range {
            // sympy maps |m| > j to 0; we reject it: no state |j m⟩ exists. These are
            // the two `zero_m_exceeds_j` rows and one `zero_swap_symmetry` row,
            // (2 2 1; 1 1 −2), whose |m₃| = 2 exceeds j₃ = 1.
            rejected += 1;
            assert!(
                matches!(result, Err(AngularError::ProjectionOutOfRange { .. })),
                "line {line}: {result:?}"
            );
        } else {
            check(line, &result.unwrap(), &f[8], &f[9], &f[10]);
        }
        checked += 1;
    }
    assert_eq!((checked, rejected), (347, 3));
}

#[test]
fn wigner_6j_matches_every_sympy_row() {
    let table = include_str!("data/wigner6j.csv");
    let mut checked = 0;
    for (line, f) in rows(table) {
        let j: Vec<u32> = f[..6].iter().map(|x| twice(x) as u32).collect();
        let j: [u32; 6] = j.try_into().unwrap();
        // Triangle-violating rows (`zero_triangle`) are well formed and return 0.
        let got = six_j_exact(j).unwrap_or_else(|e| panic!("line {line}: {e}"));
        check(line, &got, &f[8], &f[9], &f[10]);
        checked += 1;
    }
    assert_eq!(checked, 256);
}

#[test]
fn condon_shortley_ck_matches_every_sympy_row() {
    let table = include_str!("data/gaunt_ck.csv");
    let mut checked = 0;
    for (line, f) in rows(table) {
        let n = |i: usize| f[i].parse::<i32>().unwrap();
        let got = ck_exact(n(0) as u32, n(1), n(2) as u32, n(3), n(4) as u32).unwrap();
        check(line, &got, &f[7], &f[8], &f[9]);
        checked += 1;
    }
    assert_eq!(checked, 674);
}

#[test]
fn large_arguments_stay_exact() {
    // (20 20 20; 0 0 0): Edmonds (1957) eq. 3.7.17 closed form for m = 0,
    // (−1)^g √[(2g−2a)!(2g−2b)!(2g−2c)!/(2g+1)!] g!/[(g−a)!(g−b)!(g−c)!], 2g = a+b+c.
    // With a = b = c = 20, g = 30: (−1)^30 √[(20!)³/61!] · 30!/(10!)³.
    use num_bigint::BigUint;
    let fact = |n: u32| (1..=n).fold(BigUint::from(1u32), |acc, k| acc * k);
    let f = |n| BigInt::from(fact(n));
    let want_square = BigRational::new(f(20) * f(20) * f(20), f(61))
        * BigRational::new(f(30), f(10) * f(10) * f(10))
        * BigRational::new(f(30), f(10) * f(10) * f(10));
    let got = three_j_exact([40, 40, 40], [0, 0, 0]).unwrap();
    assert_eq!(got.square, want_square);
    assert!(!got.negative);
}
