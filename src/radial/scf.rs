//! What the self-consistent-field solvers share: settings, progress reports, and
//! the solution (orbitals on a grid, with energies).

use crate::notation::{Configuration, Subshell};

use super::RadialError;
use super::average::AverageEnergyExpression;
use super::energy::{EnergyParts, average_energy};
use super::grid::{GridSpec, RadialGrid};
use super::hydrogenic::slater_effective_charges;

/// Settings of a self-consistent-field calculation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScfOptions {
    /// The radial grid; its largest radius is raised when an orbital needs more room
    /// (to 12 n²/(Z − N + 1) bohr).
    pub grid: GridSpec,
    /// Most iterations. Default: 200.
    pub max_iterations: u32,
    /// Converged when no orbital changed by more than this in the last iteration
    /// (‖ΔP‖, the L² norm of the change, ∫ΔP² dr = ‖ΔP‖²). Default: 10⁻⁷.
    pub orbital_tolerance: f64,
    /// … and the total energy changed by less than this fraction of itself in the
    /// last iteration. Default: 10⁻¹².
    pub energy_tolerance: f64,
    /// Fraction of the previous orbital kept in each update (0 = none), raised
    /// automatically when the energy rises. Default: 0.
    pub damping: f64,
}

impl Default for ScfOptions {
    fn default() -> Self {
        ScfOptions {
            grid: GridSpec::default(),
            max_iterations: 200,
            orbital_tolerance: 1e-7,
            energy_tolerance: 1e-12,
            damping: 0.0,
        }
    }
}

impl ScfOptions {
    /// Check the settings; each bad value is named with its allowed range.
    pub fn validate(&self) -> Result<(), RadialError> {
        let bad = |problem: &str| {
            Err(RadialError::InvalidSettings {
                problem: problem.to_string(),
            })
        };
        if self.max_iterations == 0 {
            return bad("the iteration limit must be at least 1");
        }
        if !(self.orbital_tolerance > 0.0 && self.orbital_tolerance.is_finite()) {
            return bad("the orbital tolerance must be positive");
        }
        if !(self.energy_tolerance > 0.0 && self.energy_tolerance.is_finite()) {
            return bad("the energy tolerance must be positive");
        }
        if !(0.0..0.95).contains(&self.damping) {
            return bad("the damping must lie in [0, 0.95)");
        }
        Ok(())
    }
}

/// The stage a progress report comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ScfStage {
    /// The local-exchange (Hartree–Fock–Slater) field that gives the starting orbitals,
    /// or the whole calculation when that method is chosen.
    LocalExchange,
    /// The Hartree–Fock iterations.
    HartreeFock,
}

/// One iteration's report.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScfProgress {
    /// Which stage.
    pub stage: ScfStage,
    /// Iteration number within the stage, from 1.
    pub iteration: u32,
    /// Total (configuration-average) energy after the iteration, hartree.
    pub total_energy_hartree: f64,
    /// Change of the total energy in the iteration, hartree.
    pub energy_change_hartree: f64,
    /// Largest change ‖ΔP‖ of an orbital (Hartree–Fock) or of an orbital energy
    /// (local exchange, hartree) in the iteration.
    pub residual: f64,
    /// The damping in use.
    pub damping: f64,
}

/// Receives a report after every iteration (the command line prints them).
pub trait ScfObserver {
    /// Called once per iteration.
    fn iteration(&mut self, progress: &ScfProgress);
}

impl<F: FnMut(&ScfProgress)> ScfObserver for F {
    fn iteration(&mut self, progress: &ScfProgress) {
        self(progress)
    }
}

/// An observer that ignores every report.
#[derive(Debug, Clone, Copy, Default)]
pub struct Silent;

impl ScfObserver for Silent {
    fn iteration(&mut self, _: &ScfProgress) {}
}

/// How a set of orbitals was obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Method {
    /// Hartree–Fock for the average energy of the configuration.
    HartreeFock,
    /// Hartree–Fock–Slater: a local (Slater ρ^⅓) exchange potential with the Latter
    /// tail.
    LocalExchange,
    /// Hydrogenic orbitals with effective charges from Slater's rules (no field).
    ScreenedHydrogenic,
}

impl Method {
    /// A short name for reports.
    pub fn name(self) -> &'static str {
        match self {
            Method::HartreeFock => "Hartree–Fock (configuration average)",
            Method::LocalExchange => "Hartree–Fock–Slater (local exchange, Latter tail)",
            Method::ScreenedHydrogenic => "screened hydrogenic (Slater's rules)",
        }
    }
}

/// One orbital of a solution.
#[derive(Debug, Clone, PartialEq)]
pub struct Orbital {
    /// Its subshell (n, l and occupancy).
    pub subshell: Subshell,
    /// Orbital energy ε (the diagonal Lagrange multiplier for Hartree–Fock, the
    /// eigenvalue for a local potential, −Z_eff²/2n² for hydrogenic), hartree.
    pub energy_hartree: f64,
    /// P(r) on the solution's grid, ∫P² dr = 1, positive near the origin.
    pub p: Vec<f64>,
}

impl Orbital {
    /// The orbital label, e.g. `2p`.
    pub fn label(&self) -> String {
        self.subshell.orbital()
    }

    /// Number of nodes of P(r) (sign changes, ignoring the decayed tail).
    pub fn nodes(&self) -> u32 {
        let max = self.p.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let significant: Vec<f64> = self
            .p
            .iter()
            .map(|v| if v.abs() > 1e-4 * max { *v } else { 0.0 })
            .collect();
        super::numerov::count_nodes(&significant)
    }
}

/// Orbitals of one configuration and their energies.
#[derive(Debug, Clone, PartialEq)]
pub struct ScfSolution {
    /// Atomic number Z.
    pub nuclear_charge: u32,
    /// The configuration (subshells in the order given).
    pub configuration: Configuration,
    /// How the orbitals were obtained.
    pub method: Method,
    /// The grid the orbitals live on.
    pub grid: RadialGrid,
    /// One orbital per subshell, in the configuration's order.
    pub orbitals: Vec<Orbital>,
    /// The configuration-average energy of these orbitals and its parts.
    pub energy: EnergyParts,
    /// Iterations used (0 for hydrogenic orbitals).
    pub iterations: u32,
    /// Largest change ‖ΔP‖ of an orbital in the last iteration (Hartree–Fock); for
    /// local exchange, the last change of an orbital energy, hartree; 0 for
    /// hydrogenic orbitals.
    pub residual: f64,
}

impl ScfSolution {
    /// The orbital of subshell n l, if occupied.
    pub fn orbital(&self, n: u32, l: u32) -> Option<&Orbital> {
        self.orbitals
            .iter()
            .find(|o| o.subshell.n == n && o.subshell.l == l)
    }

    /// The electron count.
    pub fn electron_count(&self) -> u32 {
        self.configuration.electron_count()
    }
}

/// The subshells of `configuration`, checked against the nuclear charge: at least
/// one electron, at most Z + 1.
pub(crate) fn checked_subshells(
    nuclear_charge: u32,
    configuration: &Configuration,
) -> Result<Vec<Subshell>, RadialError> {
    if nuclear_charge == 0 || nuclear_charge > 118 {
        return Err(RadialError::InvalidConfiguration {
            configuration: configuration.to_string(),
            problem: format!("Z = {nuclear_charge} is not an element (1 … 118)"),
        });
    }
    let subshells: Vec<Subshell> = configuration.subshells().copied().collect();
    let electrons: u32 = subshells.iter().map(|s| s.occupancy).sum();
    if electrons == 0 {
        return Err(RadialError::InvalidConfiguration {
            configuration: configuration.to_string(),
            problem: "it has no electrons".into(),
        });
    }
    if electrons > nuclear_charge + 1 {
        return Err(RadialError::InvalidConfiguration {
            configuration: configuration.to_string(),
            problem: format!(
                "{electrons} electrons cannot be bound by a nucleus of charge {nuclear_charge}"
            ),
        });
    }
    for (i, a) in subshells.iter().enumerate() {
        if subshells[..i].iter().any(|b| b.n == a.n && b.l == a.l) {
            return Err(RadialError::InvalidConfiguration {
                configuration: configuration.to_string(),
                problem: format!("subshell {} is written twice", a.orbital()),
            });
        }
    }
    Ok(subshells)
}

/// The grid for a configuration: `spec` with the largest radius raised to
/// 12 n²/(Z − N + 1) for its outermost orbital, the extent of a hydrogenic orbital
/// around the ion left behind (at 0.7 of it a hydrogenic P has fallen below 10⁻⁶
/// of its peak).
pub(crate) fn grid_for(
    nuclear_charge: u32,
    subshells: &[Subshell],
    spec: GridSpec,
) -> Result<RadialGrid, RadialError> {
    let electrons: u32 = subshells.iter().map(|s| s.occupancy).sum();
    let ion_charge = (nuclear_charge as f64 - electrons as f64 + 1.0).max(1.0);
    let needed = subshells
        .iter()
        .map(|s| 12.0 * (s.n * s.n) as f64 / ion_charge)
        .fold(0.0, f64::max);
    let spec = GridSpec {
        r_max_bohr: spec.r_max_bohr.max(needed),
        ..spec
    };
    RadialGrid::new(nuclear_charge as f64, spec)
}

/// Hydrogenic orbitals with Slater's effective charges, made orthogonal within each
/// l by Gram–Schmidt in the order of n: the starting point of the field
/// calculations, and the [`Method::ScreenedHydrogenic`] solution.
pub fn screened_hydrogenic(
    nuclear_charge: u32,
    configuration: &Configuration,
    grid: GridSpec,
) -> Result<ScfSolution, RadialError> {
    let subshells = checked_subshells(nuclear_charge, configuration)?;
    let grid = grid_for(nuclear_charge, &subshells, grid)?;
    let charges = slater_effective_charges(nuclear_charge, &subshells);
    let mut orbitals = Vec::with_capacity(subshells.len());
    for (shell, z_eff) in subshells.iter().zip(&charges) {
        let p = super::hydrogenic::hydrogenic_orbital(&grid, shell.n, shell.l, *z_eff)?;
        orbitals.push(Orbital {
            subshell: *shell,
            energy_hartree: super::hydrogenic::hydrogenic_energy_hartree(shell.n, *z_eff),
            p,
        });
    }
    orthogonalise_by_n(&grid, &mut orbitals);
    let expression = AverageEnergyExpression::new(&subshells);
    let p: Vec<&[f64]> = orbitals.iter().map(|o| o.p.as_slice()).collect();
    let energy = average_energy(&grid, nuclear_charge as f64, &expression, &p);
    Ok(ScfSolution {
        nuclear_charge,
        configuration: configuration.clone(),
        method: Method::ScreenedHydrogenic,
        grid,
        orbitals,
        energy,
        iterations: 0,
        residual: 0.0,
    })
}

/// Gram–Schmidt within each l, lower n first (the lower orbital is kept).
pub(crate) fn orthogonalise_by_n(grid: &RadialGrid, orbitals: &mut [Orbital]) {
    let mut order: Vec<usize> = (0..orbitals.len()).collect();
    order.sort_by_key(|&i| (orbitals[i].subshell.l, orbitals[i].subshell.n));
    for (position, &i) in order.iter().enumerate() {
        for &j in &order[..position] {
            if orbitals[j].subshell.l != orbitals[i].subshell.l {
                continue;
            }
            let overlap = grid.integrate_product(&orbitals[i].p, &orbitals[j].p);
            let lower = orbitals[j].p.clone();
            for (v, w) in orbitals[i].p.iter_mut().zip(&lower) {
                *v -= overlap * w;
            }
        }
        let norm = grid
            .integrate_product(&orbitals[i].p, &orbitals[i].p)
            .sqrt();
        orbitals[i].p.iter_mut().for_each(|v| *v /= norm);
    }
}
