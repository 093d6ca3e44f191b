//! Hartree–Fock for the average energy of a configuration.
//!
//! The orbitals make E_av (see [`super::average`]) stationary under the constraint
//! that orbitals of one l stay orthonormal. Differentiating the expression's terms
//! gives each orbital's equation (Froese Fischer 1977, "The Hartree–Fock Method for
//! Atoms", ch. 3; Hartree 1957):
//!
//! ```text
//! [−½ d²/dr² + l(l+1)/(2r²) − Z/r + Y_a(r)/r] P_a + Σ_(b,k) c_abk Y^k(ab; r)/r P_b
//!     = ε_a P_a + Σ_(b≠a, l_b=l_a) ε_ab P_b
//! ```
//!
//! where a term c F^k(a,a) of E_av adds (2c/q_a) Y^k(aa) to Y_a, a term c F^k(a,b)
//! adds (c/q_a) Y^k(bb), and a term c G^k(a,b) gives the exchange term with
//! c_abk = c/q_a.
//!
//! # How the equations are solved
//!
//! On the logarithmic grid each orbital's equation is a symmetric generalised
//! eigenproblem H y = ε W y (y = P/√r, W = 2r²), whose kinetic part is Numerov's
//! operator (the private `operator` module) and whose exchange part is applied through Y^k
//! functions, exactly, without lagging it. Each iteration:
//!
//! 1. every orbital in turn takes two steps of a Davidson-type iteration: the
//!    residual (H − εW)y, kept orthogonal to the other orbitals of its l (this
//!    projection stands for the off-diagonal Lagrange multipliers ε_ab), is
//!    preconditioned with the shifted local operator (Olsen, Jørgensen & Simons
//!    1990, Chem. Phys. Lett. 169, 463), and the combination of old orbital and
//!    correction is chosen by the Rayleigh–Ritz method, keeping the root nearest
//!    the old orbital (so an excited orbital such as Na 7s stays itself);
//! 2. closed shells of one l, whose mixing leaves E_av unchanged, are made the
//!    canonical ones that diagonalise the Fock matrix among them;
//! 3. the other pairs of one l are fixed: by a Newton step on E_av in their
//!    rotation angle when the inner orbital is closed (Froese Fischer 1977,
//!    §7.4, "rotation analysis"); when it is open (He 1s2s), as
//!    [`ScfOptions::pair_mixing`] says: by default by making the inner orbital
//!    an eigenfunction of its own operator within the pair, which keeps the
//!    exchange integral physical but leaves E_av not stationary in that angle, so
//!    that the virial theorem holds only approximately; or by the same Newton
//!    steps ([`PairMixing`] gives the numbers of both);
//! 4. the orbitals are extrapolated from the last six iterations by Pulay's
//!    method (DIIS).
//!
//! The iterations start from the local-exchange orbitals of
//! [`mod@super::local_exchange`], and stop when no orbital changes by more than
//! [`ScfOptions::orbital_tolerance`] and the energy is steady.

use crate::notation::{Configuration, Subshell};

use super::RadialError;
use super::average::{EnergyExpression, SlaterKind};
use super::energy::{EnergyParts, average_energy, kinetic_energy};
use super::grid::RadialGrid;
use super::local_exchange;
use super::numerov::{ShootingOptions, origin_ratio, solve_bound_state};
use super::operator::NumerovKinetic;
use super::scf::{
    Method, Orbital, PairMixing, ScfObserver, ScfOptions, ScfProgress, ScfSolution, ScfStage,
    check_orbitals_fit, checked_subshells, screened_hydrogenic,
};
use super::slater::{r_density, yk_function, yk_of_density};
use super::term::{PairSpin, s_l_term_expression};

/// The Hartree–Fock solution of a configuration (Z = `nuclear_charge`).
///
/// ```
/// use termsight::radial::{hartree_fock, ScfOptions, Silent};
/// let config = "1s2".parse().unwrap();
/// let he = hartree_fock(2, &config, &ScfOptions::default(), &mut Silent).unwrap();
/// // Clementi & Roetti 1974: −2.8616800 hartree.
/// assert!((he.energy.total_hartree + 2.8616800).abs() < 3e-6);
/// ```
pub fn hartree_fock(
    nuclear_charge: u32,
    configuration: &Configuration,
    options: &ScfOptions,
    observer: &mut dyn ScfObserver,
) -> Result<ScfSolution, RadialError> {
    solve(
        nuclear_charge,
        configuration,
        |subshells| Ok(EnergyExpression::new(subshells)),
        options,
        observer,
    )
}

/// A Hartree–Fock solution for one term of an s·l configuration.
#[derive(Debug, Clone)]
pub struct TermSolution {
    /// The term's spin (¹L or ³L).
    pub spin: PairSpin,
    /// The orbitals; `solution.energy` is the energy of the term (hartree), not
    /// E_av, so the solution must not be mixed with configuration-average ones in
    /// [`super::radial_integrals`].
    pub solution: ScfSolution,
}

/// Term-dependent Hartree–Fock: the orbitals for the energy of the term
/// ^{2S+1}L of closed shells + s + l (Z = `nuclear_charge`; expression of
/// [`super::term`]: E_av with G^l(s,l) weighted ±1/(2l+1) instead of
/// −1/(2(2l+1))).
///
/// The equations and their solution are those of [`hartree_fock`], with the
/// exchange term of the open pair changed accordingly; the start is the same
/// local-exchange field.
///
/// For s·s' (He 1s2s) both orbitals of the pair are open and of one l, and their
/// mixing is fixed as for E_av: the inner orbital is made an eigenfunction of its
/// own Hartree–Fock operator within the pair (`align_inner` in the source), so
/// that it carries no off-diagonal multiplier and the outer orbital carries the
/// orthogonality. Making the energy stationary in the mixing angle instead lets
/// the ¹S pair slide towards 1s² (for He it ends at −2.16985 hartree, below the
/// ³S-like region, with G⁰(1s,2s) ≈ 430 cm⁻¹). For ³S the energy does not depend
/// on the angle (a determinant is unchanged by mixing its orbitals).
///
/// Caveat for ¹S: a single configuration of orthogonal orbitals is not kept
/// orthogonal to the ground state, and the ¹S energy found this way still lies
/// below the exact 2¹S energy of He (see the tests): part of the collapse
/// remains, and the virial ratio departs from 2 (2.036 for He), since the energy
/// is not stationary in the mixing angle. For a two-electron atom,
/// [`super::term::two_s_electron_singlet_energies`] turns the ¹S orbitals into
/// an upper bound to the 2¹S energy; the two bracket the exact value for He.
///
/// ```
/// use termsight::radial::{hartree_fock_term, PairSpin, ScfOptions, Silent};
/// let config = "1s 2p".parse().unwrap();
/// let options = ScfOptions::default();
/// let triplet = hartree_fock_term(2, &config, PairSpin::Triplet, &options, &mut Silent).unwrap();
/// let singlet = hartree_fock_term(2, &config, PairSpin::Singlet, &options, &mut Silent).unwrap();
/// assert!(triplet.solution.energy.total_hartree < singlet.solution.energy.total_hartree);
/// ```
pub fn hartree_fock_term(
    nuclear_charge: u32,
    configuration: &Configuration,
    spin: PairSpin,
    options: &ScfOptions,
    observer: &mut dyn ScfObserver,
) -> Result<TermSolution, RadialError> {
    let solution = solve(
        nuclear_charge,
        configuration,
        |subshells| s_l_term_expression(subshells, spin),
        options,
        observer,
    )?;
    Ok(TermSolution { spin, solution })
}

/// Hartree–Fock for the energy expression that `expression` builds from the
/// configuration's subshells.
fn solve(
    nuclear_charge: u32,
    configuration: &Configuration,
    expression: impl FnOnce(&[Subshell]) -> Result<EnergyExpression, RadialError>,
    options: &ScfOptions,
    observer: &mut dyn ScfObserver,
) -> Result<ScfSolution, RadialError> {
    options.validate()?;
    let subshells = checked_subshells(nuclear_charge, configuration)?;
    let expression = expression(&subshells)?;
    let start = screened_hydrogenic(nuclear_charge, configuration, options.grid)?;
    let z = nuclear_charge as f64;
    let (orbitals, _, _) = local_exchange::iterate(
        &start.grid,
        z,
        &subshells,
        start.orbitals,
        40,
        1e-4,
        false,
        observer,
    )?;
    let mut solver = Solver::new(&start.grid, z, expression, orbitals);
    solver.pair_mixing = options.pair_mixing;
    solver.lone_electrons_in_direct_field()?;
    let (iterations, residual) = solver.run(options, observer)?;
    let energy = solver.energy();
    let orbitals = solver.orbitals();
    for orbital in &orbitals {
        if orbital.energy_hartree >= 0.0 {
            return Err(RadialError::Unbound {
                orbital: orbital.label(),
                energy_hartree: orbital.energy_hartree,
            });
        }
    }
    // The node count belongs to the space a pair spans, not to the angle chosen in
    // it: check it with the inner orbitals made eigenfunctions within their pairs.
    let mut aligned = solver.clone();
    aligned.align_open_pairs();
    check_orbitals_fit(&start.grid, &aligned.orbitals())?;
    Ok(ScfSolution {
        nuclear_charge,
        configuration: configuration.clone(),
        method: Method::HartreeFock,
        grid: start.grid,
        orbitals,
        energy,
        iterations,
        residual,
    })
}

/// Recent iterations (orbitals before, orbitals after), for the extrapolation.
type History = std::collections::VecDeque<(Vec<Vec<f64>>, Vec<Vec<f64>>)>;

/// A term of an orbital's exchange operator: c · Y^k(b, ·)/r P_b.
#[derive(Debug, Clone, Copy)]
struct ExchangeTerm {
    other: usize,
    k: u32,
    coefficient: f64,
}

#[derive(Clone)]
struct Solver<'g> {
    grid: &'g RadialGrid,
    pair_mixing: PairMixing,
    z: f64,
    expression: EnergyExpression,
    kinetic: Vec<NumerovKinetic>,
    /// Interior values y₁ … y_{N−2} of each orbital, ∫P² dr = 1.
    u: Vec<Vec<f64>>,
    /// P on the whole grid.
    p: Vec<Vec<f64>>,
    epsilon: Vec<f64>,
    /// S_j = h r² at interior point j: Σ S u u = ∫P² dr.
    weight: Vec<f64>,
    /// Y^k(bb) of each orbital, by k, computed on demand.
    own_yk: Vec<Vec<Option<Vec<f64>>>>,
}

impl<'g> Solver<'g> {
    fn new(
        grid: &'g RadialGrid,
        z: f64,
        expression: EnergyExpression,
        orbitals: Vec<Orbital>,
    ) -> Solver<'g> {
        let n = grid.len();
        let r = grid.r();
        let weight = (1..n - 1).map(|i| grid.step() * r[i] * r[i]).collect();
        let kinetic = expression
            .subshells
            .iter()
            .map(|s| NumerovKinetic::new(grid.step(), n - 2, origin_ratio(grid, s.l, z)))
            .collect();
        let count = orbitals.len();
        let mut solver = Solver {
            grid,
            pair_mixing: PairMixing::default(),
            z,
            expression,
            kinetic,
            u: vec![Vec::new(); count],
            p: vec![Vec::new(); count],
            epsilon: orbitals.iter().map(|o| o.energy_hartree).collect(),
            weight,
            own_yk: vec![Vec::new(); count],
        };
        for (a, orbital) in orbitals.iter().enumerate() {
            let u: Vec<f64> = (1..n - 1).map(|i| orbital.p[i] / r[i].sqrt()).collect();
            solver.set_orbital(a, u);
        }
        solver
    }

    fn dot(x: &[f64], y: &[f64]) -> f64 {
        x.iter().zip(y).map(|(a, b)| a * b).sum()
    }

    fn dot_s(&self, x: &[f64], y: &[f64]) -> f64 {
        x.iter()
            .zip(y)
            .zip(&self.weight)
            .map(|((a, b), s)| a * b * s)
            .sum()
    }

    /// Store orbital a from interior values (normalising them) and rebuild P.
    fn set_orbital(&mut self, a: usize, mut u: Vec<f64>) {
        let norm = self.dot_s(&u, &u).sqrt();
        let sign = if u[0] < 0.0 { -1.0 } else { 1.0 };
        u.iter_mut().for_each(|v| *v *= sign / norm);
        self.p[a] = self.full_p(a, &u);
        self.u[a] = u;
        self.own_yk[a].clear();
    }

    /// P on the whole grid from interior y values, with y₀ = c₀y₁, y_{N−1} = 0.
    fn full_p(&self, a: usize, u: &[f64]) -> Vec<f64> {
        let r = self.grid.r();
        let n = self.grid.len();
        let mut p = vec![0.0; n];
        p[0] = r[0].sqrt() * self.kinetic[a].origin_ratio() * u[0];
        for i in 1..n - 1 {
            p[i] = r[i].sqrt() * u[i - 1];
        }
        p
    }

    fn own_yk(&mut self, b: usize, k: u32) -> &[f64] {
        let k = k as usize;
        if self.own_yk[b].len() <= k {
            self.own_yk[b].resize(k + 1, None);
        }
        if self.own_yk[b][k].is_none() {
            let y = yk_function(self.grid, k as u32, &self.p[b], &self.p[b]);
            self.own_yk[b][k] = Some(y);
        }
        self.own_yk[b][k].as_deref().unwrap_or(&[])
    }

    /// The local charge function Y_a and the exchange terms of orbital a's equation.
    fn fock_parts(&mut self, a: usize) -> (Vec<f64>, Vec<ExchangeTerm>) {
        let n = self.grid.len();
        let q = self.expression.subshells[a].occupancy as f64;
        let mut local = vec![0.0; n];
        let mut exchange = Vec::new();
        let terms = self.expression.terms.clone();
        for term in terms {
            if term.a != a && term.b != a {
                continue;
            }
            let other = if term.a == a { term.b } else { term.a };
            match term.kind {
                SlaterKind::Direct => {
                    let factor = if other == a { 2.0 } else { 1.0 } * term.coefficient / q;
                    let y = self.own_yk(other, term.k);
                    for (l, y) in local.iter_mut().zip(y) {
                        *l += factor * y;
                    }
                }
                SlaterKind::Exchange => exchange.push(ExchangeTerm {
                    other,
                    k: term.k,
                    coefficient: term.coefficient / q,
                }),
            }
        }
        (local, exchange)
    }

    /// The local part c = (l+½)² + 2r(−Z + Y_a) of orbital a's equation, interior points.
    fn diagonal(&self, a: usize, local: &[f64]) -> Vec<f64> {
        let r = self.grid.r();
        let l = self.expression.subshells[a].l as f64;
        let lh2 = (l + 0.5) * (l + 0.5);
        (1..r.len() - 1)
            .map(|i| lh2 + 2.0 * r[i] * (-self.z + local[i]))
            .collect()
    }

    /// H_s u = (h/2) [Kin u + c u + X u] for orbital a.
    fn apply(&self, a: usize, diagonal: &[f64], exchange: &[ExchangeTerm], u: &[f64]) -> Vec<f64> {
        let mut out = vec![0.0; u.len()];
        self.kinetic[a].apply(u, &mut out);
        for ((o, c), u) in out.iter_mut().zip(diagonal).zip(u) {
            *o += c * u;
        }
        if !exchange.is_empty() {
            let r = self.grid.r();
            let trial = self.full_p(a, u);
            for term in exchange {
                let pb = &self.p[term.other];
                let y = yk_of_density(self.grid, term.k, &r_density(self.grid, pb, &trial));
                for (j, o) in out.iter_mut().enumerate() {
                    let i = j + 1;
                    *o += 2.0 * term.coefficient * r[i].sqrt() * y[i] * pb[i];
                }
            }
        }
        let half_step = 0.5 * self.grid.step();
        out.iter_mut().for_each(|v| *v *= half_step);
        out
    }

    /// The other orbitals of a's l.
    fn partners(&self, a: usize) -> Vec<usize> {
        let l = self.expression.subshells[a].l;
        (0..self.u.len())
            .filter(|&b| b != a && self.expression.subshells[b].l == l)
            .collect()
    }

    /// Remove from x its S-projections on the given orbitals (x a coefficient vector).
    fn project_out(&self, x: &mut [f64], orbitals: &[usize]) {
        for &b in orbitals {
            let overlap = self.dot_s(&self.u[b], x);
            for (v, w) in x.iter_mut().zip(&self.u[b]) {
                *v -= overlap * w;
            }
        }
    }

    /// Davidson steps on orbital a; returns the new interior values and ε.
    fn improve(&mut self, a: usize, steps: u32) -> (Vec<f64>, f64) {
        let (local, exchange) = self.fock_parts(a);
        let diagonal = self.diagonal(a, &local);
        let partners = self.partners(a);
        let mut u = self.u[a].clone();
        let mut hu = self.apply(a, &diagonal, &exchange, &u);
        let mut epsilon = Self::dot(&u, &hu);
        for _ in 0..steps {
            epsilon = Self::dot(&u, &hu);
            let mut residual: Vec<f64> = hu
                .iter()
                .zip(&u)
                .zip(&self.weight)
                .map(|((h, u), s)| h - epsilon * s * u)
                .collect();
            // Q^T: remove the S-weighted components along the partners.
            for &b in &partners {
                let overlap = Self::dot(&self.u[b], &residual);
                for ((v, w), s) in residual.iter_mut().zip(&self.u[b]).zip(&self.weight) {
                    *v -= overlap * s * w;
                }
            }
            let norm = residual
                .iter()
                .zip(&self.weight)
                .map(|(v, s)| v * v / s)
                .sum::<f64>()
                .sqrt();
            if norm < 1e-13 {
                break;
            }
            // Olsen's correction with the local operator as preconditioner:
            // (h/2)(Kin + diag(c − εW)) t = rhs.
            let two_over_h = 2.0 / self.grid.step();
            let shifted: Vec<f64> = diagonal
                .iter()
                .zip(&self.weight)
                .map(|(c, s)| c - epsilon * two_over_h * s)
                .collect();
            let scaled_residual: Vec<f64> = residual.iter().map(|v| two_over_h * v).collect();
            let scaled_u: Vec<f64> = u
                .iter()
                .zip(&self.weight)
                .map(|(u, s)| two_over_h * s * u)
                .collect();
            let (Some(t1), Some(t2)) = (
                self.kinetic[a].solve_shifted(&shifted, &scaled_residual),
                self.kinetic[a].solve_shifted(&shifted, &scaled_u),
            ) else {
                break;
            };
            let alpha = self.dot_s(&u, &t1) / self.dot_s(&u, &t2);
            let mut delta: Vec<f64> = t1.iter().zip(&t2).map(|(a, b)| alpha * b - a).collect();
            if !delta.iter().all(|v| v.is_finite()) {
                break;
            }
            self.project_out(&mut delta, &partners);
            let overlap = self.dot_s(&u, &delta);
            for (v, w) in delta.iter_mut().zip(&u) {
                *v -= overlap * w;
            }
            let delta_norm = self.dot_s(&delta, &delta).sqrt();
            if delta_norm.is_nan() || delta_norm <= 1e-14 {
                break;
            }
            delta.iter_mut().for_each(|v| *v /= delta_norm);
            let hd = self.apply(a, &diagonal, &exchange, &delta);
            // Rayleigh–Ritz (Galerkin) in span{u, δ}, S-orthonormal. The root kept is
            // the one closer to the current orbital (for an excited orbital such as
            // the 7s of 1s2.2s2.2p6.7s the lower root would be a different state).
            // The discrete exchange operator is symmetric only to O(h⁶), so the
            // 2×2 matrix is kept as it is, which drives the residual itself to zero.
            let a11 = Self::dot(&u, &hu);
            let a22 = Self::dot(&delta, &hd);
            let a12 = Self::dot(&u, &hd);
            let a21 = Self::dot(&delta, &hu);
            let mean = 0.5 * (a11 + a22);
            let discriminant = 0.25 * (a11 - a22).powi(2) + a12 * a21;
            if discriminant.is_nan() || discriminant < 0.0 {
                break;
            }
            let mut best: (f64, f64, f64) = (0.0, 0.0, 0.0);
            for root in [mean - discriminant.sqrt(), mean + discriminant.sqrt()] {
                // A right eigenvector of [[a11, a12], [a21, a22]] for `root`: one of
                // two equivalent forms, the better conditioned.
                let first = (a12, root - a11);
                let second = (root - a22, a21);
                let norm = |(x, y): (f64, f64)| (x * x + y * y).sqrt();
                let (x, y) = if norm(first) >= norm(second) {
                    first
                } else {
                    second
                };
                let n = norm((x, y));
                if n.is_nan() || n <= 0.0 {
                    continue;
                }
                let (c1, c2) = (x / n, y / n);
                if c1.abs() > best.0.abs() {
                    best = (c1, c2, root);
                }
            }
            let (c1, c2, root) = best;
            if c1 == 0.0 {
                break;
            }
            let (c1, c2) = if c1 < 0.0 { (-c1, -c2) } else { (c1, c2) };
            for ((v, d), (hv, hdv)) in u.iter_mut().zip(&delta).zip(hu.iter_mut().zip(&hd)) {
                *v = c1 * *v + c2 * d;
                *hv = c1 * *hv + c2 * hdv;
            }
            epsilon = root;
        }
        (u, epsilon)
    }

    /// Start each orbital that holds one electron from its bound state (n − l − 1
    /// nodes) in the direct field of the others, −Z/r + Y_a(r)/r, which has no
    /// self-interaction.
    ///
    /// Why: the local-exchange start gives a lone outer electron its own ρ^⅓
    /// exchange, which far out, where its density is all there is, does not cancel
    /// its own repulsion; a Rydberg orbital (He 1s30s) then starts several levels
    /// away from its Hartree–Fock energy, and with level spacings of 1/n³ hartree
    /// the Davidson steps, which keep the root nearest the current orbital, settle
    /// on a neighbour (He 1s30s ended as a 27s-like orbital with 26 nodes). The
    /// exchange of a lone electron with the others is the small part of its field,
    /// so this start is near the Hartree–Fock orbital and has the right nodes.
    fn lone_electrons_in_direct_field(&mut self) -> Result<(), RadialError> {
        let r = self.grid.r().to_vec();
        for a in 0..self.u.len() {
            let shell = self.expression.subshells[a];
            if shell.occupancy != 1 {
                continue;
            }
            let (local, _) = self.fock_parts(a);
            let potential: Vec<f64> = local
                .iter()
                .zip(&r)
                .map(|(y, r)| (-self.z + y) / r)
                .collect();
            let state = solve_bound_state(
                self.grid,
                &potential,
                shell.n,
                shell.l,
                Some(self.epsilon[a]),
                ShootingOptions::default(),
            )?;
            let u: Vec<f64> = (1..r.len() - 1).map(|i| state.p[i] / r[i].sqrt()).collect();
            self.epsilon[a] = state.energy_hartree;
            self.set_orbital(a, u);
        }
        self.orthonormalise();
        Ok(())
    }

    fn energy(&self) -> EnergyParts {
        let refs: Vec<&[f64]> = self.p.iter().map(|v| v.as_slice()).collect();
        average_energy(self.grid, self.z, &self.expression, &refs)
    }

    /// Pairs (inner, outer) of one l, inner = lower n, that are not both closed
    /// shells (closed pairs are left to [`Solver::canonicalise`]).
    fn mixing_pairs(&self) -> Vec<(usize, usize)> {
        let shells = &self.expression.subshells;
        let mut pairs = Vec::new();
        for a in 0..shells.len() {
            for b in 0..shells.len() {
                if shells[a].l == shells[b].l
                    && shells[a].n < shells[b].n
                    && !(shells[a].is_closed() && shells[b].is_closed())
                {
                    pairs.push((a, b));
                }
            }
        }
        pairs
    }

    /// Closed shells of one l can be mixed without changing E_av; choose the
    /// canonical ones, which diagonalise the Fock matrix ⟨b|f_a|a⟩ among them
    /// (for closed shells f_a P_a is the same operator's action, so the matrix is
    /// symmetric; Roothaan 1951, Rev. Mod. Phys. 23, 69). Their ε are its eigenvalues.
    fn canonicalise(&mut self) {
        let shells = self.expression.subshells.clone();
        let mut done = vec![false; shells.len()];
        for a in 0..shells.len() {
            if done[a] || !shells[a].is_closed() {
                continue;
            }
            let mut group: Vec<usize> = (a..shells.len())
                .filter(|&b| shells[b].l == shells[a].l && shells[b].is_closed())
                .collect();
            group.iter().for_each(|&b| done[b] = true);
            if group.len() < 2 {
                continue;
            }
            group.sort_by_key(|&b| shells[b].n);
            let size = group.len();
            let mut fock = nalgebra::DMatrix::<f64>::zeros(size, size);
            for (i, &b) in group.iter().enumerate() {
                let (local, exchange) = self.fock_parts(b);
                let diagonal = self.diagonal(b, &local);
                let fu = self.apply(b, &diagonal, &exchange, &self.u[b]);
                for (j, &c) in group.iter().enumerate() {
                    fock[(j, i)] = Self::dot(&self.u[c], &fu);
                }
            }
            let symmetric = (&fock + fock.transpose()) * 0.5;
            let eigen = symmetric.symmetric_eigen();
            let mut order: Vec<usize> = (0..size).collect();
            order.sort_by(|&i, &j| eigen.eigenvalues[i].total_cmp(&eigen.eigenvalues[j]));
            let old: Vec<Vec<f64>> = group.iter().map(|&b| self.u[b].clone()).collect();
            for (slot, &column) in order.iter().enumerate() {
                let mut u = vec![0.0; old[0].len()];
                for (i, old_u) in old.iter().enumerate() {
                    let c = eigen.eigenvectors[(i, column)];
                    for (v, w) in u.iter_mut().zip(old_u) {
                        *v += c * w;
                    }
                }
                let b = group[slot];
                self.epsilon[b] = eigen.eigenvalues[column];
                self.set_orbital(b, u);
            }
        }
    }

    /// P_a and P_b with the pair rotated by θ.
    fn rotated(&self, a: usize, b: usize, theta: f64) -> (Vec<f64>, Vec<f64>) {
        let (c, s) = (theta.cos(), theta.sin());
        let pa = self.p[a]
            .iter()
            .zip(&self.p[b])
            .map(|(x, y)| c * x + s * y)
            .collect();
        let pb = self.p[a]
            .iter()
            .zip(&self.p[b])
            .map(|(x, y)| -s * x + c * y)
            .collect();
        (pa, pb)
    }

    /// The part of E_av that involves orbitals a or b, with P_a, P_b replaced by
    /// `pa`, `pb` (the rest of E_av does not change when they are rotated).
    fn pair_energy(&mut self, a: usize, b: usize, pa: &[f64], pb: &[f64]) -> f64 {
        let grid = self.grid;
        let h = grid.step();
        let shells = self.expression.subshells.clone();
        let pick = |x: usize, this: &Self| -> Vec<f64> {
            if x == a {
                pa.to_vec()
            } else if x == b {
                pb.to_vec()
            } else {
                this.p[x].clone()
            }
        };
        let mut energy = 0.0;
        for (x, p) in [(a, pa), (b, pb)] {
            let q = shells[x].occupancy as f64;
            energy += q
                * (kinetic_energy(grid, shells[x].l, self.z, p)
                    - self.z * grid.integrate_product_power(p, p, -1));
        }
        let terms = self.expression.terms.clone();
        for term in terms {
            let involved = |x: usize| x == a || x == b;
            if !involved(term.a) && !involved(term.b) {
                continue;
            }
            let integral = match term.kind {
                SlaterKind::Direct => {
                    // F^k(x, y) = ∫ P_x² Y^k(yy)/r dr, with y the orbital not rotated
                    // when there is one (its Y^k is cached).
                    let (x, y) = if involved(term.b) {
                        (term.b, term.a)
                    } else {
                        (term.a, term.b)
                    };
                    let px = pick(x, self);
                    let yk = if involved(y) {
                        let py = pick(y, self);
                        yk_function(grid, term.k, &py, &py)
                    } else {
                        self.own_yk(y, term.k).to_vec()
                    };
                    h * px.iter().zip(&yk).map(|(p, y)| p * p * y).sum::<f64>()
                }
                SlaterKind::Exchange => {
                    let (px, py) = (pick(term.a, self), pick(term.b, self));
                    let yk = yk_function(grid, term.k, &px, &py);
                    h * px
                        .iter()
                        .zip(&py)
                        .zip(&yk)
                        .map(|((x, y), v)| x * y * v)
                        .sum::<f64>()
                }
            };
            energy += term.coefficient * integral;
        }
        energy
    }

    /// Fix the mixing of each pair of one l that is not two closed shells.
    ///
    /// When the inner orbital is closed, the rotation angle is set by a Newton step
    /// on E_av (the Hartree–Fock stationarity condition). When the inner orbital has
    /// a vacancy (1s2s, 2p⁵3p), making E_av stationary under the rotation would let
    /// the pair slide towards the configuration with the vacancy filled (the
    /// "variational collapse" of excited configurations; for s.s' the triplet part
    /// of E_av does not depend on the angle, so the singlet part alone would set it).
    /// Such a pair is fixed instead by making the inner orbital an eigenfunction of
    /// its own Hartree–Fock operator within the pair (its off-diagonal multiplier
    /// with the outer orbital vanishes), as for an inner shell that does not see the
    /// outer electron's orthogonality.
    fn fix_mixing(&mut self) {
        for (a, b) in self.mixing_pairs() {
            if self.expression.subshells[a].is_closed()
                || self.pair_mixing == PairMixing::Stationary
            {
                self.rotation_step(a, b);
            } else {
                self.align_inner(a, b);
            }
        }
    }

    /// Make the inner orbital of each pair of one l with an open inner orbital an
    /// eigenfunction of its own operator within the pair.
    fn align_open_pairs(&mut self) {
        for (a, b) in self.mixing_pairs() {
            if !self.expression.subshells[a].is_closed() {
                self.align_inner(a, b);
            }
        }
    }

    /// Rotate pair (a, b) by θ (interior values and P).
    fn rotate(&mut self, a: usize, b: usize, theta: f64) {
        let (c, s) = (theta.cos(), theta.sin());
        let ua: Vec<f64> = self.u[a]
            .iter()
            .zip(&self.u[b])
            .map(|(x, y)| c * x + s * y)
            .collect();
        let ub: Vec<f64> = self.u[a]
            .iter()
            .zip(&self.u[b])
            .map(|(x, y)| -s * x + c * y)
            .collect();
        self.set_orbital(a, ua);
        self.set_orbital(b, ub);
    }

    /// One Newton step on E_av(θ) for the rotation of pair (a, b)
    /// (Froese Fischer 1977, §7.4), kept only if it lowers E_av.
    fn rotation_step(&mut self, a: usize, b: usize) {
        const STEP: f64 = 1e-3;
        let (pa, pb) = (self.p[a].clone(), self.p[b].clone());
        let e0 = self.pair_energy(a, b, &pa, &pb);
        let (pa, pb) = self.rotated(a, b, STEP);
        let plus = self.pair_energy(a, b, &pa, &pb);
        let (pa, pb) = self.rotated(a, b, -STEP);
        let minus = self.pair_energy(a, b, &pa, &pb);
        let gradient = (plus - minus) / (2.0 * STEP);
        let curvature = (plus - 2.0 * e0 + minus) / (STEP * STEP);
        if curvature.is_nan() || curvature <= 0.0 {
            return;
        }
        let theta = (-gradient / curvature).clamp(-0.1, 0.1);
        if theta.abs() < 1e-12 {
            return;
        }
        let (pa, pb) = self.rotated(a, b, theta);
        if self.pair_energy(a, b, &pa, &pb) < e0 {
            self.rotate(a, b, theta);
        }
    }

    /// Rotate pair (a, b) so that a is an eigenvector of its own operator f_a in
    /// span{a, b}: the eigenvector nearer to a is kept.
    fn align_inner(&mut self, a: usize, b: usize) {
        let (local, exchange) = self.fock_parts(a);
        let diagonal = self.diagonal(a, &local);
        let fa = self.apply(a, &diagonal, &exchange, &self.u[a]);
        let fb = self.apply(a, &diagonal, &exchange, &self.u[b]);
        let m11 = Self::dot(&self.u[a], &fa);
        let m22 = Self::dot(&self.u[b], &fb);
        let m12 = 0.5 * (Self::dot(&self.u[a], &fb) + Self::dot(&self.u[b], &fa));
        // The rotation angle that zeroes the off-diagonal element:
        // tan 2θ = 2 m12 / (m11 − m22); the smaller solution keeps a nearest.
        let theta = 0.5 * (2.0 * m12).atan2(m11 - m22);
        let theta = if theta > std::f64::consts::FRAC_PI_4 {
            theta - std::f64::consts::FRAC_PI_2
        } else if theta < -std::f64::consts::FRAC_PI_4 {
            theta + std::f64::consts::FRAC_PI_2
        } else {
            theta
        };
        if theta.abs() > 1e-14 {
            self.rotate(a, b, theta);
        }
    }

    fn run(
        &mut self,
        options: &ScfOptions,
        observer: &mut dyn ScfObserver,
    ) -> Result<(u32, f64), RadialError> {
        const HISTORY: usize = 6;
        let mut damping = options.damping;
        let mut last_energy = self.energy().total_hartree;
        let mut residual = f64::INFINITY;
        // (orbitals before, orbitals after) of recent iterations, for extrapolation.
        let mut history = History::new();
        for iteration in 1..=options.max_iterations {
            let before = self.u.clone();
            for a in 0..self.u.len() {
                let (u_new, epsilon) = self.improve(a, 2);
                let mixed: Vec<f64> = if damping > 0.0 {
                    u_new
                        .iter()
                        .zip(&self.u[a])
                        .map(|(new, old)| (1.0 - damping) * new + damping * old)
                        .collect()
                } else {
                    u_new
                };
                self.epsilon[a] = epsilon;
                self.set_orbital(a, mixed);
            }
            self.canonicalise();
            self.fix_mixing();
            residual = before
                .iter()
                .zip(&self.u)
                .map(|(x, y)| {
                    let d: Vec<f64> = x.iter().zip(y).map(|(a, b)| b - a).collect();
                    self.dot_s(&d, &d).sqrt()
                })
                .fold(0.0, f64::max);
            history.push_back((before, self.u.clone()));
            if history.len() > HISTORY {
                history.pop_front();
            }
            if history.len() >= 2 {
                if let Some(extrapolated) = self.extrapolate(&history) {
                    for (a, u) in extrapolated.into_iter().enumerate() {
                        self.set_orbital(a, u);
                    }
                    self.orthonormalise();
                    self.canonicalise();
                } else {
                    history.clear();
                }
            }
            let energy = self.energy().total_hartree;
            let change = energy - last_energy;
            observer.iteration(&ScfProgress {
                stage: ScfStage::HartreeFock,
                iteration,
                total_energy_hartree: energy,
                energy_change_hartree: change,
                residual,
                damping,
            });
            if !energy.is_finite() {
                break;
            }
            if residual < options.orbital_tolerance
                && change.abs() < options.energy_tolerance * energy.abs()
            {
                return Ok((iteration, residual));
            }
            if change > 1e-9 * energy.abs() && iteration > 2 {
                // The energy rose: start the extrapolation afresh, and damp.
                history.clear();
                damping = (damping + 0.15).min(0.75);
            }
            last_energy = energy;
        }
        Err(RadialError::NotConverged {
            iterations: options.max_iterations,
            residual,
        })
    }

    /// Pulay's extrapolation (DIIS; Pulay 1980, Chem. Phys. Lett. 73, 393), also
    /// known as Anderson mixing: the combination Σ c_i G(x_i), Σ c_i = 1, whose
    /// combined change Σ c_i (G(x_i) − x_i) is smallest in the S-norm.
    fn extrapolate(&self, history: &History) -> Option<Vec<Vec<f64>>> {
        let m = history.len();
        let changes: Vec<Vec<Vec<f64>>> = history
            .iter()
            .map(|(x, gx)| {
                x.iter()
                    .zip(gx)
                    .map(|(x, g)| g.iter().zip(x).map(|(g, x)| g - x).collect())
                    .collect()
            })
            .collect();
        let mut system = nalgebra::DMatrix::<f64>::zeros(m + 1, m + 1);
        for i in 0..m {
            for j in 0..=i {
                let value: f64 = changes[i]
                    .iter()
                    .zip(&changes[j])
                    .map(|(a, b)| self.dot_s(a, b))
                    .sum();
                system[(i, j)] = value;
                system[(j, i)] = value;
            }
            system[(i, m)] = 1.0;
            system[(m, i)] = 1.0;
        }
        let scale = (0..m).map(|i| system[(i, i)]).fold(0.0, f64::max);
        if scale.is_nan() || scale <= 0.0 {
            return None;
        }
        for i in 0..m {
            system[(i, i)] *= 1.0 + 1e-10;
        }
        let mut rhs = nalgebra::DVector::<f64>::zeros(m + 1);
        rhs[m] = 1.0;
        let solution = system.lu().solve(&rhs)?;
        let coefficients: Vec<f64> = (0..m).map(|i| solution[i]).collect();
        if coefficients
            .iter()
            .any(|c| !c.is_finite() || c.abs() > 50.0)
        {
            return None;
        }
        let count = self.u.len();
        let size = self.u[0].len();
        let mut result = vec![vec![0.0; size]; count];
        for (c, (_, gx)) in coefficients.iter().zip(history) {
            for (r, g) in result.iter_mut().zip(gx) {
                for (v, w) in r.iter_mut().zip(g) {
                    *v += c * w;
                }
            }
        }
        Some(result)
    }

    /// Gram–Schmidt within each l, lower n first.
    fn orthonormalise(&mut self) {
        let shells = self.expression.subshells.clone();
        let mut order: Vec<usize> = (0..shells.len()).collect();
        order.sort_by_key(|&a| (shells[a].l, shells[a].n));
        for (position, &a) in order.iter().enumerate() {
            let mut u = self.u[a].clone();
            let lower: Vec<usize> = order[..position]
                .iter()
                .copied()
                .filter(|&b| shells[b].l == shells[a].l)
                .collect();
            self.project_out(&mut u, &lower);
            self.set_orbital(a, u);
        }
    }

    fn orbitals(&self) -> Vec<Orbital> {
        self.expression
            .subshells
            .iter()
            .enumerate()
            .map(|(a, shell)| Orbital {
                subshell: *shell,
                energy_hartree: self.epsilon[a],
                p: self.p[a].clone(),
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::radial::hydrogenic::hydrogenic_zeta_hartree;
    use crate::radial::integrals::spin_orbit_hartree;
    use crate::radial::slater::gk_integral;
    use crate::units::constants::HARTREE_CM1;

    fn solve(z: u32, config: &str) -> ScfSolution {
        let config: Configuration = config.parse().unwrap();
        hartree_fock(
            z,
            &config,
            &ScfOptions::default(),
            &mut crate::radial::Silent,
        )
        .unwrap_or_else(|e| panic!("Z = {z} {config}: {e}"))
    }

    fn assert_relative(got: f64, expected: f64, tolerance: f64, what: &str) {
        let relative = (got - expected).abs() / expected.abs();
        assert!(
            relative < tolerance,
            "{what}: {got} vs {expected} ({relative:.1e})"
        );
    }

    #[test]
    fn closed_shell_ground_states_match_clementi_roetti() {
        // Total energies, hartree: Clementi & Roetti 1974, At. Data Nucl. Data Tables
        // 14, 177 (also Froese Fischer's tables): He −2.8616800, Be −14.5730232,
        // Ne −128.5470981, Ar −526.8175128. Required: 1e-6 relative; the virial
        // ratio −V/T = 2 to 1e-6 (virial theorem for Hartree–Fock solutions).
        for (z, config, reference) in [
            (2, "1s2", -2.8616800),
            (4, "1s2 2s2", -14.5730232),
            (10, "1s2 2s2 2p6", -128.5470981),
            (18, "1s2 2s2 2p6 3s2 3p6", -526.8175128),
        ] {
            let solution = solve(z, config);
            assert_relative(solution.energy.total_hartree, reference, 1e-6, config);
            let virial = solution.energy.virial_ratio();
            assert!((virial - 2.0).abs() < 1e-6, "{config}: −V/T = {virial}");
        }
    }

    #[test]
    fn orbital_energies_of_argon_match_published_values() {
        // Ar Hartree–Fock orbital energies, hartree (Clementi & Roetti 1974; values
        // from memory): 1s −118.6104, 2s −12.3222, 2p −9.5715, 3s −1.2774, 3p −0.5910.
        let ar = solve(18, "1s2 2s2 2p6 3s2 3p6");
        for (orbital, reference) in [
            ((1, 0), -118.6104),
            ((2, 0), -12.3222),
            ((2, 1), -9.5715),
            ((3, 0), -1.2774),
            ((3, 1), -0.5910),
        ] {
            let got = ar.orbital(orbital.0, orbital.1).unwrap().energy_hartree;
            assert!((got - reference).abs() < 2e-4, "{orbital:?}: {got}");
        }
    }

    #[test]
    fn one_open_s_electron_atoms_and_heavier_closed_shells() {
        // Numerical Hartree–Fock totals, hartree (Froese Fischer 1977, tables;
        // Clementi & Roetti 1974; values from memory): Li 1s2.2s −7.432727,
        // Na ...3s −161.858912, Kr −2752.054977, Xe −7232.138364. These exercise the
        // rotation analysis (Li, Na) and Z up to 54.
        for (z, config, reference) in [
            (3, "1s2 2s", -7.432727),
            (11, "1s2 2s2 2p6 3s", -161.858912),
            (36, "1s2 2s2 2p6 3s2 3p6 3d10 4s2 4p6", -2752.054977),
            (
                54,
                "1s2 2s2 2p6 3s2 3p6 3d10 4s2 4p6 4d10 5s2 5p6",
                -7232.138364,
            ),
        ] {
            let solution = solve(z, config);
            assert_relative(solution.energy.total_hartree, reference, 1e-6, config);
            assert!(
                (solution.energy.virial_ratio() - 2.0).abs() < 1e-6,
                "{config}"
            );
        }
    }

    #[test]
    fn open_d_and_f_shells_converge_and_obey_the_virial_theorem() {
        // Convergence checks: iron 3d6.4s2 and 3d7.4s, Xe IX 4d9.4f (open f),
        // zirconium 4d2.5s2. The virial theorem holds for every stationary solution
        // of E_av (Froese Fischer 1977, §2.8), so −V/T = 2 checks that each is one.
        for (z, config) in [
            (26, "1s2 2s2 2p6 3s2 3p6 3d6 4s2"),
            (26, "1s2 2s2 2p6 3s2 3p6 3d7 4s"),
            (54, "1s2 2s2 2p6 3s2 3p6 3d10 4s2 4p6 4d9 4f"),
            (40, "1s2 2s2 2p6 3s2 3p6 3d10 4s2 4p6 4d2 5s2"),
        ] {
            let solution = solve(z, config);
            let virial = solution.energy.virial_ratio();
            assert!((virial - 2.0).abs() < 1e-6, "{config}: −V/T = {virial}");
            for orbital in &solution.orbitals {
                let expected = orbital.subshell.n - orbital.subshell.l - 1;
                assert_eq!(orbital.nodes(), expected, "{config}: {}", orbital.label());
                assert!(orbital.energy_hartree < 0.0);
            }
        }
    }

    #[test]
    fn one_electron_hartree_fock_is_the_hydrogen_atom() {
        // With one electron there is no interaction: E = −Z²/(2n²) (Bohr) and
        // ζ = α²Z⁴/(2n³ l(l+½)(l+1)) (Bethe & Salpeter 1957, eq. 13.10).
        for (z, config, n, l) in [(1, "1s", 1, 0), (1, "2p", 2, 1), (26, "3d", 3, 2)] {
            let solution = solve(z, config);
            let zf = z as f64;
            let exact = -zf * zf / (2.0 * (n * n) as f64);
            assert!(
                (solution.energy.total_hartree - exact).abs() < 1e-9 * zf * zf,
                "{config}"
            );
            if let Some(zeta) = hydrogenic_zeta_hartree(n, l, zf) {
                assert_relative(spin_orbit_hartree(&solution, 0), zeta, 1e-8, config);
            }
        }
    }

    /// He I levels of tests/data/reference-data/HeI-levels.csv (NIST ASD 2014 export, copied from
    /// ../shared/reference-data), cm⁻¹, by (configuration, term, J).
    fn helium_level(config: &str, term: &str, j: &str) -> f64 {
        let text = include_str!("../../tests/data/reference-data/HeI-levels.csv");
        text.lines()
            .skip(1)
            .map(|line| line.splitn(5, ',').collect::<Vec<_>>())
            .find(|f| f[0] == config && f[1] == term && f[2] == j)
            .map(|f| f[3].parse().unwrap())
            .unwrap()
    }

    /// E(¹S₀) − E(³S₁) of He I 1s.ns, cm⁻¹ (NIST ASD 2014, via `helium_level`).
    fn observed_s_splitting(config: &str) -> f64 {
        helium_level(config, "1S", "0") - helium_level(config, "3S", "1")
    }

    /// E(¹P°₁) − the (2J+1)-weighted centroid of ³P°, cm⁻¹, of He I 1s.np
    /// (NIST ASD 2014, via `helium_level`).
    fn observed_p_splitting(config: &str) -> f64 {
        let triplet = (5.0 * helium_level(config, "3P*", "2")
            + 3.0 * helium_level(config, "3P*", "1")
            + helium_level(config, "3P*", "0"))
            / 9.0;
        helium_level(config, "1P*", "1") - triplet
    }

    #[test]
    fn helium_singlet_triplet_splittings_from_exchange_integrals() {
        // First order in the electron interaction, 1s ns: E(¹S) − E(³S) = 2G⁰(1s,ns);
        // 1s np: E(¹P) − E(³P) = 2G¹(1s,np)/3 (term energies of s.s' and s.p in
        // tests/data/check-values/term_energies.csv, sympy). Published levels: NIST ASD 2014.
        let observed_s = observed_s_splitting("1s.2s");
        let observed_p = observed_p_splitting("1s.2p");

        let s = solve(2, "1s 2s");
        let p = solve(2, "1s 2p");
        let g0 = gk_integral(&s.grid, 0, &s.orbitals[0].p, &s.orbitals[1].p) * HARTREE_CM1;
        let g1 = gk_integral(&p.grid, 1, &p.orbitals[0].p, &p.orbitals[1].p) * HARTREE_CM1;
        let ratio_s = 2.0 * g0 / observed_s;
        let ratio_p = 2.0 * g1 / 3.0 / observed_p;
        // Measured: 6421.5 cm⁻¹ (1s2s), 2048.1 cm⁻¹ (1s2p, from the ³P centroid).
        // Computed, unscaled: 2G⁰ = 4993 cm⁻¹ (ratio 0.78), 2G¹/3 = 2299 cm⁻¹
        // (ratio 1.12). Scaled by the customary 0.85 the 1s2p value lands within
        // 5 % (0.95) and the 1s2s value at 0.66: the single-configuration 2¹S level
        // lacks its interaction with 1s² and 1s ns ¹S, which pushes it up (our
        // reading, not checked here). Term-dependent orbitals:
        // `helium_singlet_triplet_splittings_from_term_calculations`.
        // Regression pins (our own output, not physics): 0.78 and 1.12.
        assert!((ratio_s - 0.78).abs() < 0.02, "1s2s: ratio {ratio_s}");
        assert!((ratio_p - 1.12).abs() < 0.02, "1s2p: ratio {ratio_p}");
        // Physics: the customary scaling of Slater integrals by 0.8–0.9 for neutral
        // atoms brings a splitting within about 20 % of the observed one (common
        // practice, no source) where configuration interaction does not shift it.
        assert!(
            (0.85 * ratio_p - 1.0).abs() < 0.2,
            "1s2p scaled: {}",
            0.85 * ratio_p
        );
    }

    fn solve_term(z: u32, config: &str, spin: PairSpin) -> ScfSolution {
        let config: Configuration = config.parse().unwrap();
        hartree_fock_term(
            z,
            &config,
            spin,
            &ScfOptions::default(),
            &mut crate::radial::Silent,
        )
        .unwrap_or_else(|e| panic!("Z = {z} {config} {spin:?}: {e}"))
        .solution
    }

    #[test]
    fn helium_triplet_and_p_term_energies_match_published_hartree_fock() {
        // Term-dependent Hartree–Fock totals of He, hartree (Froese Fischer 1977,
        // "The Hartree–Fock Method for Atoms", tables; Cohen & Kelly 1967; values
        // from memory, hence the tolerances): 1s2s ³S −2.17425, 1s2p ³P −2.13143,
        // 1s2p ¹P −2.1225. Ours: −2.1742508 (5 iterations), −2.1314371 (4),
        // −2.1224642 (4).
        //
        // Independent of memory: each of these is the lowest state of its symmetry
        // (2³S, 2³P°, 2¹P°), so the Hartree–Fock energy lies above the exact
        // nonrelativistic one (variational theorem) by the correlation energy, a
        // few millihartree for He: exact −2.1752294, −2.1331642, −2.1238431
        // (Drake, Springer Handbook of Atomic, Molecular and Optical Physics 2006,
        // table 11.5; values from memory). And the solutions are stationary, so
        // −V/T = 2 (virial theorem, Froese Fischer 1977, §2.8).
        for (config, spin, published, tolerance, exact) in [
            ("1s 2s", PairSpin::Triplet, -2.17425, 2e-5, -2.1752294),
            ("1s 2p", PairSpin::Triplet, -2.13143, 2e-5, -2.1331642),
            ("1s 2p", PairSpin::Singlet, -2.1225, 2e-4, -2.1238431),
        ] {
            let solution = solve_term(2, config, spin);
            let e = solution.energy.total_hartree;
            assert!(
                (e - published).abs() < tolerance,
                "{config} {spin:?}: {e} vs {published}"
            );
            assert!(e > exact && e < exact + 3e-3, "{config} {spin:?}: {e}");
            let virial = solution.energy.virial_ratio();
            assert!(
                (virial - 2.0).abs() < 1e-6,
                "{config} {spin:?}: −V/T = {virial}"
            );
        }
    }

    #[test]
    fn helium_singlet_triplet_splittings_from_term_calculations() {
        // E(¹L) − E(³L) from two term-dependent calculations against the He I
        // levels (NIST ASD 2014, see `helium_level`): 6421.5 cm⁻¹ for 1s2s,
        // 2048.1 cm⁻¹ for 1s2p (from the ³P centroid).
        //
        // Measured here: 1s2p 1969.3 cm⁻¹, ratio 0.962 (with E_av orbitals 2G¹/3
        // gave 1.12 raw); 1s2s 4261.2 cm⁻¹, ratio 0.664: no better than 0.85 × 2G⁰
        // from E_av orbitals (0.66). The ¹S solution (−2.1548353 hartree,
        // 9 iterations, −V/T = 2.036) lies below the exact 2¹S energy −2.1459740
        // (Drake 2006, value from memory): with orthogonal orbitals the ¹S
        // function is not orthogonal to 1s², and it has partly collapsed towards
        // it (see `hartree_fock_term`). Its orbitals remain those of an excited
        // state: 1s nodeless, 2s with one node, ε(2s) = −0.155 hartree.
        //
        // Informative, Slater integrals (cm⁻¹) from each set of orbitals:
        // G⁰(1s,2s) = 2496.3 (E_av), 3088.4 (³S), 1399.8 (¹S);
        // G¹(1s,2p) = 3449.2 (E_av), 4229.5 (³P), 2057.6 (¹P).
        let observed_s = observed_s_splitting("1s.2s");
        let observed_p = observed_p_splitting("1s.2p");

        let s3 = solve_term(2, "1s 2s", PairSpin::Triplet);
        let s1 = solve_term(2, "1s 2s", PairSpin::Singlet);
        let p3 = solve_term(2, "1s 2p", PairSpin::Triplet);
        let p1 = solve_term(2, "1s 2p", PairSpin::Singlet);
        let split = |singlet: &ScfSolution, triplet: &ScfSolution| {
            (singlet.energy.total_hartree - triplet.energy.total_hartree) * HARTREE_CM1
        };
        let ratio_s = split(&s1, &s3) / observed_s;
        let ratio_p = split(&p1, &p3) / observed_p;
        // Regression pins (our own output): 0.962 and 0.664.
        assert!((ratio_p - 0.962).abs() < 0.01, "1s2p: ratio {ratio_p}");
        assert!((ratio_s - 0.664).abs() < 0.01, "1s2s: ratio {ratio_s}");
        // Physics, 1s2p: the published Hartree–Fock term energies (Froese Fischer
        // 1977, from memory: ¹P −2.1225, ³P −2.13143 hartree) give 1960 cm⁻¹,
        // 0.957 of the observed splitting; the ¹P value is remembered to 10⁻⁴
        // hartree (22 cm⁻¹), hence 0.02.
        let published_p = (-2.1225 + 2.13143) * HARTREE_CM1 / observed_p;
        assert!(
            (ratio_p - published_p).abs() < 0.02,
            "1s2p: ratio {ratio_p}, published {published_p}"
        );
        // Physics, 1s2s: the ¹S solution lies below the exact 2¹S energy −2.1459740
        // hartree (Drake 2006, from memory), so its splitting from the ³S solution
        // (above the exact 2³S by its correlation energy) is below the observed one.
        assert!(s1.energy.total_hartree < -2.1459740);
        assert!(ratio_s < 1.0, "1s2s: ratio {ratio_s}");

        // Within the two-orbital space of the ¹S orbitals, the second root of the
        // ¹S matrix in 1s², (1s2s)¹S, 2s² (`term::two_s_electron_singlet_energies`)
        // lies above the exact 2¹S energy −2.1459740 (Hylleraas–Undheim–MacDonald
        // theorem; exact value Drake 2006, from memory). Measured: −2.1389977
        // hartree, splitting 7737 cm⁻¹, ratio 1.205: the two ¹S estimates bracket
        // the observed level (0.66 and 1.20 of the observed splitting).
        let roots = crate::radial::term::two_s_electron_singlet_energies(
            &s1.grid,
            2.0,
            &s1.orbitals[0].p,
            &s1.orbitals[1].p,
        );
        assert!(
            roots[1] > -2.1459740 && roots[1] < -2.1459740 + 0.01,
            "{roots:?}"
        );
        let ratio_ci = (roots[1] - s3.energy.total_hartree) * HARTREE_CM1 / observed_s;
        // Regression pin (our own output): 1.205. Physics: the two estimates bracket
        // the observed splitting (the ¹S energies bracket the exact 2¹S, above).
        assert!((ratio_ci - 1.205).abs() < 0.01, "1s2s CI: ratio {ratio_ci}");
        assert!(ratio_s < 1.0 && ratio_ci > 1.0, "{ratio_s} {ratio_ci}");

        // 1s3p in the same way: 625.7 cm⁻¹ against 644.8 cm⁻¹ (NIST ASD 2014, ¹P°
        // less the ³P° centroid), ratio 0.970. (1s3s: 1081.4 against 1628.0,
        // ratio 0.66, the same partial collapse as 1s2s; not checked here.)
        let ratio_3p = split(
            &solve_term(2, "1s 3p", PairSpin::Singlet),
            &solve_term(2, "1s 3p", PairSpin::Triplet),
        ) / observed_p_splitting("1s.3p");
        // Regression pin (our own output): 0.970. Physics: as for 1s2p, the
        // term-dependent orbitals give ¹P − ³P within 10 % of the observed splitting,
        // the accuracy published Hartree–Fock term energies reach for 1s2p (0.957,
        // above); 1s3p has less correlation, not more.
        assert!((ratio_3p - 0.970).abs() < 0.01, "1s3p: ratio {ratio_3p}");
        assert!((ratio_3p - 1.0).abs() < 0.1, "1s3p: ratio {ratio_3p}");

        // The ¹S orbitals are still those of 1s2s.
        assert_eq!(s1.orbital(1, 0).unwrap().nodes(), 0);
        assert_eq!(s1.orbital(2, 0).unwrap().nodes(), 1);
        let e2s = s1.orbital(2, 0).unwrap().energy_hartree;
        assert!((-0.2..-0.1).contains(&e2s), "ε(2s) = {e2s}");

        // The exchange integral grows from E_av orbitals to triplet orbitals (the
        // triplet's outer electron is pulled in: its exchange term is attractive).
        let g = |s: &ScfSolution, k: u32| {
            gk_integral(&s.grid, k, &s.orbitals[0].p, &s.orbitals[1].p) * HARTREE_CM1
        };
        let average_s = solve(2, "1s 2s");
        let average_p = solve(2, "1s 2p");
        assert!(g(&s3, 0) > 1.2 * g(&average_s, 0));
        assert!(g(&p3, 1) > 1.2 * g(&average_p, 1));
    }

    #[test]
    fn magnesium_3s3p_terms_converge() {
        // Mg 1s2.2s2.2p6.3s.3p: closed inner s and p shells of the same l as the
        // open pair (the rotation analysis of `fix_mixing`). Convergence and the
        // virial theorem (Froese Fischer 1977, §2.8). The splitting: ¹P − ³P =
        // 16588 cm⁻¹ here, against 13182.8 cm⁻¹ observed (Mg I 3s3p ¹P° 35051.264,
        // ³P° centroid 21868.4 from J = 0, 1, 2 at 21850.405, 21870.464, 21911.178;
        // NIST ASD of 2017-10 via tests/data/reference-data/MgI-levels.csv), ratio 1.26.
        let triplet = solve_term(12, "1s2 2s2 2p6 3s 3p", PairSpin::Triplet);
        let singlet = solve_term(12, "1s2 2s2 2p6 3s 3p", PairSpin::Singlet);
        for s in [&triplet, &singlet] {
            assert!((s.energy.virial_ratio() - 2.0).abs() < 1e-6);
        }
        let observed = 35051.264 - (21850.405 + 3.0 * 21870.464 + 5.0 * 21911.178) / 9.0;
        let split = (singlet.energy.total_hartree - triplet.energy.total_hartree) * HARTREE_CM1;
        // Regression pin (our own output): 1.26. Physics: above the observed value,
        // as unscaled single-configuration exchange splittings of neutral atoms are
        // (the reason for the customary scaling of G^k by 0.8–0.9; common practice,
        // no source).
        assert!((split / observed - 1.26).abs() < 0.05, "split {split} cm⁻¹");
        assert!(split > observed, "split {split} cm⁻¹");
    }

    #[test]
    fn open_pairs_of_one_l_obey_the_virial_theorem_when_stationary() {
        // He 1s2s, 1s3s and Mg 3s4s: two open s orbitals. Made stationary in every
        // direction, E_av obeys the virial theorem −V/T = 2 (Löwdin 1959, J. Mol.
        // Spectrosc. 3, 46; Froese Fischer 1977, §2.8). Tolerance 10⁻⁶ as for the
        // other configurations of this module: the solution is converged to
        // ‖ΔP‖ < 10⁻⁷, and −V/T − 2 is first order in the error of the orbitals.
        let stationary = ScfOptions {
            pair_mixing: PairMixing::Stationary,
            ..ScfOptions::default()
        };
        let run = |z: u32, config: &str, options: &ScfOptions| {
            hartree_fock(
                z,
                &config.parse().unwrap(),
                options,
                &mut crate::radial::Silent,
            )
            .unwrap_or_else(|e| panic!("{config}: {e}"))
        };
        //
        // He 1s3s reaches only 1.99997 (measured): the Davidson steps of its 3s stop
        // reducing the residual of its equation at 1.6·10⁻⁵ (a limit of this solver,
        // not of the grid: the same grid gives 10⁻⁹ elsewhere), so it is held to
        // 10⁻⁴, still thirty times closer than without the stationary angle (2.0035).
        for (z, config, tolerance) in [
            (2, "1s 2s", 1e-6),
            (2, "1s 3s", 1e-4),
            (12, "1s2 2s2 2p6 3s 4s", 1e-6),
        ] {
            let solution = run(z, config, &stationary);
            let virial = solution.energy.virial_ratio();
            assert!(
                (virial - 2.0).abs() < tolerance,
                "{config}: −V/T = {virial}"
            );
            // The default, the inner orbital an eigenfunction in the pair, is not
            // stationary in the angle: E_av lies above the stationary (lowest in the
            // angle) value, and the virial ratio is off.
            let default = run(z, config, &ScfOptions::default());
            assert!(default.energy.total_hartree > solution.energy.total_hartree);
            assert!(
                (default.energy.virial_ratio() - 2.0).abs() > 1e-5,
                "{config}"
            );
        }
        // He 1s2s: E_av = E(³S part) + G⁰/2, the first part unchanged by the
        // rotation and never below the ³S Hartree–Fock energy −2.17425 hartree
        // (Froese Fischer 1977, from memory; variational), and G⁰ ≥ 0. No published
        // E_av of 1s2s is known to us. Measured: −2.1730513 (stationary), −2.1678763.
        let he = run(2, "1s 2s", &stationary);
        assert!(
            he.energy.total_hartree > -2.17425,
            "{}",
            he.energy.total_hartree
        );
    }

    #[test]
    fn rydberg_orbital_is_the_requested_root() {
        // Na 1s2.2s2.2p6.7s: the 7s must keep its six nodes; its energy is close to
        // the binding energy of Na I 7s, 41449.45 − 38012.04 = 3437.4 cm⁻¹
        // (NIST ASD, values from memory), as Koopmans' theorem suggests for an
        // outer electron.
        let na = solve(11, "1s2 2s2 2p6 7s");
        let seven_s = na.orbital(7, 0).unwrap();
        assert_eq!(seven_s.nodes(), 6);
        let binding = -seven_s.energy_hartree * HARTREE_CM1;
        assert!(
            (binding / 3437.4 - 1.0).abs() < 0.03,
            "7s binding {binding} cm⁻¹"
        );
    }

    #[test]
    fn bad_configurations_are_errors() {
        let config: Configuration = "1s2 2s2".parse().unwrap();
        assert!(matches!(
            hartree_fock(
                1,
                &config,
                &ScfOptions::default(),
                &mut crate::radial::Silent
            ),
            Err(RadialError::InvalidConfiguration { .. })
        ));
        let options = ScfOptions {
            damping: 1.5,
            ..ScfOptions::default()
        };
        assert!(matches!(
            hartree_fock(4, &config, &options, &mut crate::radial::Silent),
            Err(RadialError::InvalidSettings { .. })
        ));
    }
}
