//! Before iterating: can the matched levels determine the free parameters?
//!
//! Three tests on the derivatives D_ij = ∂E_i/∂x_j of the matched levels with
//! respect to the fit variables at the starting values, each failing with a
//! message that names the parameters:
//!
//! 1. a variable with no effect: |D_ij| < 10⁻⁹ for every level i (the parameter
//!    acts only on levels that are not in the table);
//! 2. more free variables than matched levels, with the configurations where the
//!    free parameters outnumber the levels;
//! 3. linear dependence: the singular value decomposition of the weighted D with
//!    columns scaled to unit length has a singular value below 10⁻⁹ of the largest;
//!    the right singular vector of each such value is a direction in which the
//!    parameters can move together without changing any matched level, named with
//!    its proportions in the parameters' own units. Column scaling makes the test
//!    independent of the units and sizes of the parameters (E_av of 10⁵ cm⁻¹ beside
//!    ζ of 1 cm⁻¹); the relative threshold 10⁻⁹ lies far above the rounding of
//!    Hellmann–Feynman derivatives (about 10⁻¹³) and far below any combination a
//!    level set determines in practice.

use nalgebra::DMatrix;

use super::FitError;

/// A derivative smaller than this is no effect at all (its column is zero up to
/// the rounding of the eigenvectors).
pub(crate) const NO_EFFECT: f64 = 1e-9;

/// Singular values below this fraction of the largest count as zero.
pub(crate) const RANK_TOLERANCE: f64 = 1e-9;

/// One configuration whose free parameters outnumber its matched levels.
#[derive(Debug, Clone, PartialEq)]
pub struct CrowdedConfiguration {
    /// The configuration.
    pub configuration: String,
    /// Its free parameters (full names).
    pub parameters: Vec<String>,
    /// Matched levels whose largest share is this configuration.
    pub levels: usize,
}

/// What the checks need to know besides the derivatives.
pub(crate) struct CheckContext<'a> {
    /// Full name of each variable (its leading parameter).
    pub names: &'a [String],
    /// The configuration each variable belongs to (None for interactions).
    pub variable_configuration: &'a [Option<usize>],
    /// The configuration (largest share) of each matched level.
    pub level_configuration: &'a [usize],
    /// Configuration labels.
    pub configuration_names: &'a [String],
}

/// Run the three checks. `derivatives` is levels × variables, unweighted;
/// `weights` multiply the rows.
pub(crate) fn check_determined(
    derivatives: &DMatrix<f64>,
    weights: &[f64],
    context: &CheckContext<'_>,
) -> Result<(), FitError> {
    let (levels, variables) = derivatives.shape();
    if variables == 0 {
        return Ok(());
    }
    let without_effect: Vec<String> = (0..variables)
        .filter(|&j| derivatives.column(j).iter().all(|d| d.abs() < NO_EFFECT))
        .map(|j| context.names[j].clone())
        .collect();
    if !without_effect.is_empty() {
        return Err(FitError::NoEffect {
            parameters: without_effect,
        });
    }
    if variables > levels {
        let crowded = context
            .configuration_names
            .iter()
            .enumerate()
            .filter_map(|(c, name)| {
                let parameters: Vec<String> = (0..variables)
                    .filter(|&j| context.variable_configuration[j] == Some(c))
                    .map(|j| context.names[j].clone())
                    .collect();
                let count = context
                    .level_configuration
                    .iter()
                    .filter(|&&l| l == c)
                    .count();
                (parameters.len() > count).then(|| CrowdedConfiguration {
                    configuration: name.clone(),
                    parameters,
                    levels: count,
                })
            })
            .collect();
        return Err(FitError::TooFewLevels {
            free: variables,
            levels,
            crowded,
        });
    }
    let combinations = null_directions(derivatives, weights)
        .into_iter()
        .map(|direction| {
            direction
                .into_iter()
                .map(|(j, share)| (context.names[j].clone(), share))
                .collect()
        })
        .collect::<Vec<Vec<(String, f64)>>>();
    if !combinations.is_empty() {
        return Err(FitError::Undetermined { combinations });
    }
    Ok(())
}

/// The directions (variable index, proportion; the largest proportion 1 in
/// magnitude) along which the weighted `derivatives` do not change, from the
/// singular value decomposition of the column-scaled matrix.
pub(crate) fn null_directions(
    derivatives: &DMatrix<f64>,
    weights: &[f64],
) -> Vec<Vec<(usize, f64)>> {
    let (scaled, norms) = scaled_columns(derivatives, weights);
    let svd = scaled.svd(false, true);
    let Some(v_t) = svd.v_t else {
        return Vec::new();
    };
    let largest = svd.singular_values.max();
    let mut directions = Vec::new();
    for (row, &s) in svd.singular_values.iter().enumerate() {
        if s > RANK_TOLERANCE * largest {
            continue;
        }
        // Back to the parameters' own units: Δx_j = v_j / ‖column j‖.
        let step: Vec<f64> = v_t
            .row(row)
            .iter()
            .zip(&norms)
            .map(|(v, n)| v / n)
            .collect();
        let biggest = step.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let sign = step
            .iter()
            .find(|v| v.abs() == biggest)
            .map_or(1.0, |v| v.signum());
        directions.push(
            step.iter()
                .enumerate()
                .map(|(j, v)| (j, sign * v / biggest))
                .filter(|(_, v)| v.abs() > 1e-6)
                .collect(),
        );
    }
    directions
}

/// The weighted matrix with unit-length columns, and the column lengths.
pub(crate) fn scaled_columns(
    derivatives: &DMatrix<f64>,
    weights: &[f64],
) -> (DMatrix<f64>, Vec<f64>) {
    let mut scaled = derivatives.clone();
    for (mut row, w) in scaled.row_iter_mut().zip(weights) {
        row *= *w;
    }
    let norms: Vec<f64> = scaled
        .column_iter()
        .map(|c| c.norm().max(f64::MIN_POSITIVE))
        .collect();
    for (mut column, n) in scaled.column_iter_mut().zip(&norms) {
        column /= *n;
    }
    (scaled, norms)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn context<'a>(
        names: &'a [String],
        configs: &'a [Option<usize>],
        levels: &'a [usize],
        labels: &'a [String],
    ) -> CheckContext<'a> {
        CheckContext {
            names,
            variable_configuration: configs,
            level_configuration: levels,
            configuration_names: labels,
        }
    }

    #[test]
    fn triplet_levels_alone_cannot_split_eav_from_g() {
        // s.p without spin–orbit: E(¹P) − E(³P) = 2G¹/3 (Condon & Shortley 1935,
        // §7⁶) about the centre of gravity E_av = [9E(³P) + 3E(¹P)]/12, so every ³P
        // level is E_av − G¹/6: ³P levels alone fix only that combination, and
        // ΔE_av = ΔG¹/6 leaves them all unchanged.
        let d = DMatrix::from_row_slice(3, 2, &[1.0, -1.0 / 6.0, 1.0, -1.0 / 6.0, 1.0, -1.0 / 6.0]);
        let names = vec!["Eav@3s.3p".to_string(), "G1(3s,3p)@3s.3p".to_string()];
        let configs = [Some(0), Some(0)];
        let labels = ["3s.3p".to_string()];
        let e = check_determined(
            &d,
            &[1.0; 3],
            &context(&names, &configs, &[0, 0, 0], &labels),
        )
        .unwrap_err();
        let FitError::Undetermined { combinations } = &e else {
            panic!("{e}");
        };
        assert_eq!(combinations.len(), 1);
        let c = &combinations[0];
        assert_eq!(c[1].0, "G1(3s,3p)@3s.3p");
        assert!(
            (c[1].1 - 1.0).abs() < 1e-12 && (c[0].1 - 1.0 / 6.0).abs() < 1e-12,
            "{c:?}"
        );
        assert!(e.to_string().contains("Eav@3s.3p"), "{e}");
    }

    #[test]
    fn a_parameter_without_effect_is_named() {
        let d = DMatrix::from_row_slice(2, 2, &[1.0, 0.0, 1.0, 1e-12]);
        let names = vec!["Eav@1s.2s".to_string(), "zeta(3d)@1s.3d".to_string()];
        let e = check_determined(
            &d,
            &[1.0; 2],
            &context(
                &names,
                &[Some(0), Some(1)],
                &[0, 0],
                &["1s.2s".into(), "1s.3d".into()],
            ),
        )
        .unwrap_err();
        assert_eq!(
            e,
            FitError::NoEffect {
                parameters: vec!["zeta(3d)@1s.3d".into()]
            }
        );
    }

    #[test]
    fn too_few_levels_names_the_crowded_configuration() {
        let d = DMatrix::from_row_slice(1, 2, &[1.0, 1.0]);
        let names = vec!["Eav@1s.2s".to_string(), "G0(1s,2s)@1s.2s".to_string()];
        let e = check_determined(
            &d,
            &[1.0],
            &context(&names, &[Some(0), Some(0)], &[0], &["1s.2s".into()]),
        )
        .unwrap_err();
        let text = e.to_string();
        assert!(
            text.contains("2 free parameters") && text.contains("1 matched level"),
            "{text}"
        );
        assert!(
            text.contains("1s.2s") && text.contains("G0(1s,2s)@1s.2s"),
            "{text}"
        );
    }
}
