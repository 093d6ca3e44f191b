//! The fit's variables: which model parameters move, and how.
//!
//! A free parameter is one variable of the fit. A tied parameter follows its
//! leader with a fixed ratio (P_tied = ratio × P_leader), so a leader and all
//! parameters tied to it form one group and share one variable; a parameter tied
//! to a fixed one is fixed too. By the chain rule the derivative of a level
//! energy with respect to a group's variable is
//! ∂E/∂x = Σ_{p in group} ratio_p · ∂E/∂P_p (ratio 1 for the leader).

use crate::structure::LevelStructure;
use crate::structure::model::{LevelModel, Vary};

use super::FitError;

/// How one parameter of the structure gets its value from the fit variables.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Link {
    /// Held at this value (a fixed parameter, or one tied to a fixed one).
    Fixed(f64),
    /// `ratio` × fit variable `variable`.
    Variable {
        /// Index of the fit variable.
        variable: usize,
        /// Its ratio to the variable (1 for the leader itself).
        ratio: f64,
    },
}

/// The map between the fit variables and the full parameter vector of a
/// [`LevelStructure`].
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct ParameterMap {
    /// For each fit variable: the structure index of its leading (free) parameter.
    pub leaders: Vec<usize>,
    /// For each structure parameter: how it is set.
    pub links: Vec<Link>,
    /// The starting value of every structure parameter.
    pub initial: Vec<f64>,
}

impl ParameterMap {
    /// The variables of `model`, indexed like `structure`'s parameters.
    pub fn new(model: &LevelModel, structure: &LevelStructure) -> Result<ParameterMap, FitError> {
        let ids = structure.parameters();
        let mut by_structure: Vec<Option<usize>> = vec![None; ids.len()];
        for (m, parameter) in model.parameters.iter().enumerate() {
            let index = structure.parameter_index(&parameter.id).ok_or_else(|| {
                FitError::ModelMismatch {
                    problem: format!(
                        "parameter {} is not one of the model's level structure",
                        model.full_name(&parameter.id)
                    ),
                }
            })?;
            by_structure[index] = Some(m);
        }
        let by_structure: Vec<usize> = by_structure
            .iter()
            .enumerate()
            .map(|(s, m)| {
                m.ok_or_else(|| FitError::ModelMismatch {
                    problem: format!(
                        "the model gives no value for {}",
                        ids[s].full_name(structure.configurations())
                    ),
                })
            })
            .collect::<Result<_, _>>()?;
        let mut leaders = Vec::new();
        let mut links = vec![Link::Fixed(0.0); ids.len()];
        // Free parameters first, in structure order: each is one variable.
        for (s, &m) in by_structure.iter().enumerate() {
            let parameter = &model.parameters[m];
            match parameter.vary {
                Vary::Free => {
                    links[s] = Link::Variable {
                        variable: leaders.len(),
                        ratio: 1.0,
                    };
                    leaders.push(s);
                }
                Vary::Fixed => links[s] = Link::Fixed(parameter.value),
                Vary::Tied { .. } => {}
            }
        }
        // Then the tied ones follow their leaders.
        for (s, &m) in by_structure.iter().enumerate() {
            let parameter = &model.parameters[m];
            let Vary::Tied { to, ratio } = parameter.vary else {
                continue;
            };
            let name = model.full_name(&parameter.id);
            let leader = structure
                .parameter_index(&to)
                .ok_or_else(|| FitError::ModelMismatch {
                    problem: format!(
                        "{name} is tied to {}, which is not a parameter of the model",
                        model.full_name(&to)
                    ),
                })?;
            if !ratio.is_finite() {
                return Err(FitError::ModelMismatch {
                    problem: format!("{name}: the tie ratio is not a finite number"),
                });
            }
            let target = &model.parameters[by_structure[leader]];
            links[s] = match (target.vary, links[leader]) {
                (Vary::Free, Link::Variable { variable, .. }) => Link::Variable { variable, ratio },
                (Vary::Fixed, _) => Link::Fixed(ratio * target.value),
                _ => {
                    return Err(FitError::ModelMismatch {
                        problem: format!(
                            "{name} is tied to {}, which is itself tied; tie to a free or \
                             fixed parameter",
                            model.full_name(&to)
                        ),
                    });
                }
            };
        }
        let initial = links
            .iter()
            .map(|link| match *link {
                Link::Fixed(value) => value,
                Link::Variable { variable, ratio } => {
                    ratio * model.parameters[by_structure[leaders[variable]]].value
                }
            })
            .collect();
        Ok(ParameterMap {
            leaders,
            links,
            initial,
        })
    }

    /// Number of fit variables.
    pub fn variable_count(&self) -> usize {
        self.leaders.len()
    }

    /// The starting values of the variables (their leaders' values).
    pub fn start(&self) -> Vec<f64> {
        self.leaders.iter().map(|&s| self.initial[s]).collect()
    }

    /// Every parameter value for the variables `x`.
    pub fn values(&self, x: &[f64]) -> Vec<f64> {
        self.links
            .iter()
            .map(|link| match *link {
                Link::Fixed(value) => value,
                Link::Variable { variable, ratio } => ratio * x[variable],
            })
            .collect()
    }

    /// ∂E/∂x_j for every variable, from the derivatives ∂E/∂P of one level.
    pub fn chain(&self, derivatives: &[f64], out: &mut [f64]) {
        out.fill(0.0);
        for (link, d) in self.links.iter().zip(derivatives) {
            if let Link::Variable { variable, ratio } = *link {
                out[variable] += ratio * d;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::structure::model::parse_model;

    const MG: &str = r#"species = "Mg I"
[[configuration]]
label = "3s2"
Eav = { value = 0.0, vary = "fixed" }
[[configuration]]
label = "3s.3p"
Eav = 30000.0
"G1(3s,3p)" = 12000.0
"zeta(3p)" = 40.0
[[configuration]]
label = "3p2"
Eav = 60000.0
"F2(3p)" = { tie = "G1(3s,3p)", ratio = 2.5 }
"zeta(3p)" = { tie = "zeta(3p)@3s.3p", ratio = 1.1 }
"#;

    #[test]
    fn free_fixed_and_tied_parameters_map_to_variables() {
        let loaded = parse_model(MG, "mg.toml").unwrap();
        let map = ParameterMap::new(&loaded.model, &loaded.structure).unwrap();
        let names: Vec<String> = map
            .leaders
            .iter()
            .map(|&s| loaded.structure.parameters()[s].full_name(loaded.structure.configurations()))
            .collect();
        // Free: Eav@3s.3p, G1, zeta(3p)@3s.3p, Eav@3p2; the two tied ones follow.
        assert_eq!(names.len(), 4, "{names:?}");
        assert!(names.contains(&"G1(3s,3p)@3s.3p".to_string()));
        assert!(!names.iter().any(|n| n.contains("@3s2")));
        let x: Vec<f64> = (1..=4).map(|i| 10.0 * i as f64).collect();
        let values = map.values(&x);
        let value_of = |name: &str| {
            let i = loaded
                .structure
                .parameters()
                .iter()
                .position(|p| p.full_name(loaded.structure.configurations()) == name)
                .unwrap();
            (i, values[i])
        };
        let g = value_of("G1(3s,3p)@3s.3p").1;
        assert_eq!(value_of("F2(3p)@3p2").1, 2.5 * g);
        assert_eq!(
            value_of("zeta(3p)@3p2").1,
            1.1 * value_of("zeta(3p)@3s.3p").1
        );
        assert_eq!(value_of("Eav@3s2").1, 0.0);
        // Chain rule: dE/dx_G = dE/dG1 + 2.5·dE/dF2.
        let (gi, _) = value_of("G1(3s,3p)@3s.3p");
        let (fi, _) = value_of("F2(3p)@3p2");
        let mut d = vec![0.0; values.len()];
        d[gi] = 0.3;
        d[fi] = 0.2;
        let mut out = vec![0.0; 4];
        map.chain(&d, &mut out);
        let variable = match map.links[gi] {
            Link::Variable { variable, .. } => variable,
            Link::Fixed(_) => unreachable!(),
        };
        assert!((out[variable] - (0.3 + 2.5 * 0.2)).abs() < 1e-15);
    }

    #[test]
    fn a_tie_to_a_fixed_parameter_is_fixed() {
        let text = MG.replace(
            "\"G1(3s,3p)\" = 12000.0",
            "\"G1(3s,3p)\" = { value = 12000.0, vary = \"fixed\" }",
        );
        let loaded = parse_model(&text, "mg.toml").unwrap();
        let map = ParameterMap::new(&loaded.model, &loaded.structure).unwrap();
        assert_eq!(map.variable_count(), 3);
        let values = map.values(&[1.0, 2.0, 3.0]);
        assert!(values.contains(&30000.0) && values.contains(&12000.0));
    }
}
