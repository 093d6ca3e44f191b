//! What the self-consistent-field solvers share: settings, progress reports, and
//! the solution (orbitals on a grid, with energies).

use crate::notation::{Configuration, Subshell};

use super::average::AverageEnergyExpression;
use super::energy::{EnergyParts, average_energy};
use super::grid::{GridSpec, RadialGrid};
use super::hydrogenic::slater_effective_charges;
use super::{GridRemedy, RadialError};

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
    /// How Hartree–Fock fixes the mixing of two orbitals of one l when the inner one
    /// is not a closed shell (He 1s2s, Mg 3s4s). Default:
    /// [`PairMixing::InnerEigenfunction`].
    pub pair_mixing: PairMixing,
}

/// How Hartree–Fock fixes the mixing (rotation) of two orbitals of one l when the
/// inner one is not a closed shell, as in He 1s2s or Mg 3s4s.
///
/// Rotating such a pair changes E_av. For s·s′, E_av = E(³S-like part) + G⁰/2
/// with the first part unchanged by the rotation, so making E_av stationary in the
/// angle makes G⁰ smallest: the orbitals localise, the inner one takes a small
/// outer lobe of the other sign, and G⁰ falls far below what the singlet–triplet
/// splitting needs. Measured for He 1s2s: G⁰(1s,2s) = 511 cm⁻¹ stationary,
/// 2496 cm⁻¹ with the inner orbital an eigenfunction, against 3211 cm⁻¹ from the
/// observed E(2¹S) − E(2³S) = 2G⁰ (NIST ASD 2014); E_av −2.1730513 against
/// −2.1678763 hartree.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum PairMixing {
    /// The inner orbital is an eigenfunction of its own Hartree–Fock operator
    /// within the pair (its off-diagonal Lagrange multiplier with the outer one is
    /// zero). Keeps the orbitals 1s-like and 2s-like and the exchange integral
    /// physical, but E_av is not stationary in the mixing angle, so the virial
    /// ratio −V/T departs from 2 (He 1s2s 2.0140, 1s3s 2.0035, Mg 3s4s 2.00008).
    #[default]
    InnerEigenfunction,
    /// E_av stationary in the mixing angle (Newton steps on the angle; Froese
    /// Fischer 1977, §7.4): a true stationary point, −V/T = 2, but with the small
    /// exchange integral described above. The node count of each orbital is then
    /// checked on the pair rotated as for [`PairMixing::InnerEigenfunction`]: the
    /// rotation changes the orbitals, not the space they span.
    Stationary,
}

impl Default for ScfOptions {
    fn default() -> Self {
        ScfOptions {
            grid: GridSpec::default(),
            max_iterations: 200,
            orbital_tolerance: 1e-7,
            energy_tolerance: 1e-12,
            damping: 0.0,
            pair_mixing: PairMixing::default(),
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

    /// Number of nodes of P(r): sign changes between its lobes, values below 10⁻⁴
    /// of the largest |P| taken as zero, and outer lobes smaller than 1 % of the
    /// largest |P| left out.
    ///
    /// Why the outer lobes are left out: the exchange term of a term-dependent
    /// orbital acts as a source in its equation and can leave it a small outer lobe
    /// of the other sign (He 1s2p ¹P: the 1s has one of 3.7·10⁻⁴ of its peak beyond
    /// 5.4 bohr; Mg 3s3p ¹P: the 3s one of 2.7·10⁻³ beyond 10 bohr), which is no
    /// node of the orbital's shell structure. Inner lobes are all counted: those of
    /// a Rydberg orbital are small but real.
    pub fn nodes(&self) -> u32 {
        let max = self.p.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        // The peak |P| of each lobe, innermost first.
        let mut lobes: Vec<f64> = Vec::new();
        let mut last_sign = 0.0;
        for &v in &self.p {
            if v.abs() <= 1e-4 * max {
                continue;
            }
            if v.signum() != last_sign {
                lobes.push(0.0);
                last_sign = v.signum();
            }
            if let Some(peak) = lobes.last_mut() {
                *peak = peak.max(v.abs());
            }
        }
        while lobes.len() > 1 && lobes.last().is_some_and(|&peak| peak < 1e-2 * max) {
            lobes.pop();
        }
        lobes.len().saturating_sub(1) as u32
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
/// 12 n²/ζ for its outermost orbital, ζ = Z − N + 1 the charge of the ion left
/// behind (at 0.7 of it a hydrogenic P has fallen below 10⁻⁶ of its peak), and the
/// step lowered to at most [`RYDBERG_PHASE_STEP`]/(ζ n) for the orbital of largest n.
///
/// Why the step: with y = P/√r on x = ln(Z r), y'' = g y, and in the region where
/// a Rydberg orbital spends its time (r ≈ n²/ζ) the local wavenumber √(−g) reaches
/// ζ n (from g = 2r²(V − E) + (l+½)², V = −ζ/r, E = −ζ²/2n²). Numerov's error grows
/// as (h √(−g))⁴: measured on the Coulomb problem (tests of this module), the
/// relative error of E is about 1.6·10⁻³ (h ζ n)⁴, so the default h = 1/96 loses
/// 1.5·10⁻⁵ at n = 30 and 2·10⁻³ at n = 100 (a quantum defect off by 0.1), while
/// h ζ n ≤ 0.12 keeps it near 3·10⁻⁷ (and ⟨r⟩ to 10⁻⁶).
pub(crate) fn grid_for(
    nuclear_charge: u32,
    subshells: &[Subshell],
    spec: GridSpec,
) -> Result<RadialGrid, RadialError> {
    let spec = grid_spec_for(nuclear_charge, subshells, spec);
    let z = nuclear_charge as f64;
    let points = ((z * spec.r_max_bohr).ln() - spec.x_start) / spec.step;
    if points > MAX_GRID_POINTS {
        return Err(RadialError::GridCannotHold {
            orbital: outermost(subshells),
            problem: format!(
                "a grid of step {:.3e} out to {:.0} bohr would have {points:.0} points, more \
                 than {MAX_GRID_POINTS}",
                spec.step, spec.r_max_bohr
            ),
            remedy: GridRemedy::LargerStep,
        });
    }
    RadialGrid::new(z, spec)
}

/// The most points [`grid_for`] builds (2·10⁶, the limit of [`RadialGrid::new`]).
const MAX_GRID_POINTS: f64 = 2.0e6;

/// The largest h ζ n of [`grid_for`]'s step rule.
pub const RYDBERG_PHASE_STEP: f64 = 0.12;

/// The grid settings [`grid_for`] uses for these subshells (before the grid is
/// built).
pub fn grid_spec_for(nuclear_charge: u32, subshells: &[Subshell], spec: GridSpec) -> GridSpec {
    let electrons: u32 = subshells.iter().map(|s| s.occupancy).sum();
    let ion_charge = (nuclear_charge as f64 - electrons as f64 + 1.0).max(1.0);
    let n_max = subshells.iter().map(|s| s.n).max().unwrap_or(1) as f64;
    let needed = 12.0 * n_max * n_max / ion_charge;
    let step = RYDBERG_PHASE_STEP / (ion_charge * n_max);
    GridSpec {
        r_max_bohr: spec.r_max_bohr.max(needed),
        step: spec.step.min(step),
        ..spec
    }
}

/// The label of the orbital of largest n (the one a grid must reach out for).
fn outermost(subshells: &[Subshell]) -> String {
    subshells
        .iter()
        .max_by_key(|s| s.n)
        .map_or_else(String::new, |s| s.orbital())
}

/// Check that every orbital has the nodes its n and l give (n − l − 1) and has
/// decayed before the grid's end; otherwise the grid could not hold it.
pub(crate) fn check_orbitals_fit(
    grid: &RadialGrid,
    orbitals: &[Orbital],
) -> Result<(), RadialError> {
    for orbital in orbitals {
        let expected = orbital.subshell.n - orbital.subshell.l - 1;
        let nodes = orbital.nodes();
        if nodes != expected {
            return Err(RadialError::GridCannotHold {
                orbital: orbital.label(),
                problem: format!(
                    "the solution found has {nodes} nodes instead of {expected} (grid step \
                     h = {:.3e})",
                    grid.step()
                ),
                remedy: GridRemedy::SmallerStep,
            });
        }
        let tail = super::numerov::tail_fraction(grid, &orbital.p);
        if tail > 1e-6 {
            return Err(RadialError::GridCannotHold {
                orbital: orbital.label(),
                problem: format!(
                    "it has not decayed at the grid's end, r = {:.1} bohr ({tail:.1e} of \
                     its largest value)",
                    grid.r().last().copied().unwrap_or(0.0)
                ),
                remedy: GridRemedy::LargerRadius,
            });
        }
    }
    Ok(())
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
