//! Charge neutrality: the Fermi level, band carriers and ionized dopants at a
//! temperature, with Fermi-Dirac statistics for the band carriers.
//!
//! # Statistics
//! - Band carriers: `n = Nc F_{1/2}((E_F - E_c)/kT)`, `p = Nv F_{1/2}((E_v -
//!   E_F)/kT)` with Blakemore-normalised F_{1/2} ([`super::fermi`]); parabolic
//!   bands with the material's Nc(T), Nv(T) ([`super::material`]).
//! - Dopants: one level per species at `E_dop(N)` from its band edge with the
//!   localised fraction `b(N)` (Altermatt et al. 2006, see [`super::dopant`]):
//!   neutral donors `N_D^0 = b N_D / (1 + exp((E_D - E_F)/kT) / g_D)`, neutral
//!   acceptors `N_A^0 = b N_A / (1 + exp((E_F - E_A)/kT) / g_A)`, g_D = 2,
//!   g_A = 4. Densities of a species given twice are added; `E_dop(N)` and
//!   `b(N)` use the species' own total density.
//! - No band-gap narrowing and no excited dopant states (documented model
//!   limits; both matter above ~1e18 cm^-3).
//!
//! # Solver
//! Neutrality `p - n + N_D^+ - N_A^- = 0` is rewritten without cancellation
//! as `Q+ = Q-` with `Q+ = p + sum N_A^0 + max(N_D - N_A, 0)` and
//! `Q- = n + sum N_D^0 + max(N_A - N_D, 0)` (all terms positive). The unknown
//! is the reduced Fermi level `u = (E_F - E_v)/kT`; every term is computed as a
//! logarithm with its slope in u, so 20 K in 4H-SiC (densities of 1e-800
//! cm^-3) neither underflows nor loses the balance. `h(u) = ln Q+ - ln Q-`
//! falls strictly with u. Newton steps on h start from a Boltzmann estimate
//! (single-level freeze-out solution scaled to the complete-ionization one);
//! the iterates bracket the root, and whenever a step would leave that
//! bracket the missing end is built from the doping and n_i and the step
//! becomes a bisection. No heap allocation; 3.6 evaluations per solve on
//! average, 6 at worst, over a 20-1000 K Si sweep (the
//! `evaluations_per_solve` test), each ~20 exp/ln calls: ~2.3 us of CPU per
//! solve (release build, `benches/carriers_solve.rs`).
//!
//! # Pairing with mobility
//! See [`super::dopant`]: mobility models fitted against total dopant
//! density (Masetti, Arora, Klaassen) take `donors_total_cm3` /
//! `acceptors_total_cm3`, not the ionized densities; their full-ionization
//! fit convention is undone once at 300 K, and no neutral-impurity
//! scattering term is added for the neutral fraction reported here.
//!
//! # Kanda's piezoresistance factor
//! `eta_n` / `eta_p` are the arguments Kanda (1982) uses:
//! `P = (300/T) F_{-1/2}(eta)/F_{1/2}(eta)` with the Blakemore-normalised
//! integrals, available as `fermi::ln_f_half_and_slope(eta).1`.

use super::constants::K_B_EV_PER_K;
use super::dopant::{DopantKind, dopant_level};
use super::error::ModelError;
use super::fermi::{inv_f_half, ln_f_half_and_slope};
use super::material::Material;
use super::model::Sample;

/// Lowest temperature the model accepts, in kelvin.
pub const T_MIN_K: f64 = 20.0;
/// Highest temperature the model accepts, in kelvin (InSb: [`t_max_k`]).
pub const T_MAX_K: f64 = 1000.0;
/// Lowest density accepted for one dopant entry, in cm^-3.
pub const DENSITY_MIN_CM3: f64 = 1e10;
/// Highest density accepted for one dopant entry, in cm^-3.
pub const DENSITY_MAX_CM3: f64 = 1e21;
/// Relative charge residual the solver guarantees where rounding allows (see [`CarrierState::residual_bound`]).
pub const RESIDUAL_BOUND: f64 = 1e-9;

/// The solved equilibrium state of a sample at one temperature.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct CarrierState {
    /// Temperature in kelvin.
    pub t_k: f64,
    /// Band gap in eV.
    pub eg_ev: f64,
    /// Intrinsic density in cm^-3 (Boltzmann definition sqrt(Nc Nv) exp(-Eg/2kT), no gap narrowing).
    pub ni_cm3: f64,
    /// Effective density of states of the conduction band in cm^-3.
    pub nc_cm3: f64,
    /// Effective density of states of the valence band in cm^-3.
    pub nv_cm3: f64,
    /// Electron density in cm^-3.
    pub n_cm3: f64,
    /// Hole density in cm^-3.
    pub p_cm3: f64,
    /// Ionized donor density (sum over donor species) in cm^-3.
    pub donors_ionized_cm3: f64,
    /// Ionized acceptor density (sum over acceptor species) in cm^-3.
    pub acceptors_ionized_cm3: f64,
    /// Total donor density in cm^-3.
    pub donors_total_cm3: f64,
    /// Total acceptor density in cm^-3.
    pub acceptors_total_cm3: f64,
    /// Fermi level measured from the valence-band edge, in eV.
    pub fermi_from_ev_ev: f64,
    /// |p - n + Nd+ - Na-| / (n + p + Nd+ + Na-) at the solution.
    pub neutrality_residual: f64,
    /// Reduced electron Fermi level (E_F - E_c)/kT (argument of F_{1/2} for n; Kanda's eta for n-type).
    pub eta_n: f64,
    /// Reduced hole Fermi level (E_v - E_F)/kT (argument of F_{1/2} for p; Kanda's eta for p-type).
    pub eta_p: f64,
}

impl CarrierState {
    /// The residual this state is guaranteed to meet: [`RESIDUAL_BOUND`] plus the f64 rounding floor of the charge balance.
    ///
    /// In strongly compensated or frozen-out samples the balance is a small
    /// difference of large dopant totals, and no f64 computation can resolve
    /// it better than a few ulp of those totals; relative to the (small)
    /// mobile and ionized charge that floor is `16 eps (N_D + N_A + n + p) /
    /// (n + p + N_D^+ + N_A^-)`. It exceeds 1e-9 only when the ionized charge
    /// is below ~3e-6 of the total doping.
    pub fn residual_bound(&self) -> f64 {
        let den = self.n_cm3 + self.p_cm3 + self.donors_ionized_cm3 + self.acceptors_ionized_cm3;
        let big = self.donors_total_cm3 + self.acceptors_total_cm3 + self.n_cm3 + self.p_cm3;
        if den > 0.0 {
            RESIDUAL_BOUND + 16.0 * f64::EPSILON * big / den
        } else {
            // Intrinsic 4H-SiC near 20 K: every density underflows; the
            // residual is then computed in logarithms alone.
            RESIDUAL_BOUND
        }
    }
}

/// Highest temperature accepted for `material`, in kelvin.
///
/// InSb melts at 800 K and its Varshni gap (Vurgaftman 2001) approaches zero
/// there, so it is limited to 700 K; all others to [`T_MAX_K`].
pub fn t_max_k(material: Material) -> f64 {
    match material {
        Material::InSb => 700.0,
        _ => T_MAX_K,
    }
}

/// Checks a temperature against the model range of `material`.
pub fn check_temperature(material: Material, t_k: f64) -> Result<(), ModelError> {
    let max_k = t_max_k(material);
    if t_k >= T_MIN_K && t_k <= max_k {
        Ok(())
    } else {
        Err(ModelError::TemperatureOutOfRange {
            t_k,
            min_k: T_MIN_K,
            max_k,
        })
    }
}

/// Checks every dopant of `sample`: known species of the right kind for the material, density in range.
pub fn check_sample(sample: &Sample) -> Result<(), ModelError> {
    for (list, kind) in [
        (&sample.donors, DopantKind::Donor),
        (&sample.acceptors, DopantKind::Acceptor),
    ] {
        for d in list {
            match dopant_level(sample.material, d.species) {
                Some(l) if l.kind == kind => {}
                _ => {
                    return Err(ModelError::UnknownSpecies {
                        species: d.species.symbol().to_string(),
                        kind: kind.name(),
                        material: sample.material.name(),
                    });
                }
            }
            if !(d.density_cm3 >= DENSITY_MIN_CM3 && d.density_cm3 <= DENSITY_MAX_CM3) {
                return Err(ModelError::DensityOutOfRange {
                    species: d.species.symbol().to_string(),
                    density_cm3: d.density_cm3,
                    min_cm3: DENSITY_MIN_CM3,
                    max_cm3: DENSITY_MAX_CM3,
                });
            }
        }
    }
    Ok(())
}

/// One dopant level prepared for the solver (reduced units).
#[derive(Debug, Clone, Copy, Default)]
struct Level {
    /// Density of localised states b N in cm^-3 and its logarithm.
    w: f64,
    ln_w: f64,
    /// Always-ionized part (1 - b) N in cm^-3.
    free: f64,
    /// z = z0 - u for donors, z = u - z0 for acceptors; occupancy 1/(1+e^z).
    z0: f64,
}

#[cfg(test)]
thread_local! {
    /// Number of neutrality evaluations (test instrumentation).
    static EVALS: std::cell::Cell<u32> = const { std::cell::Cell::new(0) };
}

/// At most one level per species.
const MAX_LEVELS: usize = 13;

/// The neutrality problem in reduced units.
struct Problem {
    ln_nc: f64,
    ln_nv: f64,
    eg_red: f64,
    /// max(N_D - N_A, 0) and max(N_A - N_D, 0), as logarithms (-inf if zero).
    ln_net_pos: f64,
    ln_net_neg: f64,
    donors: [Level; MAX_LEVELS],
    n_donors: usize,
    acceptors: [Level; MAX_LEVELS],
    n_acceptors: usize,
}

/// Running log-sum-exp with the slope of the sum: ln(sum e^l_k), d/du.
#[derive(Clone, Copy)]
struct LogSum {
    m: f64,
    s: f64,
    d: f64,
}

impl LogSum {
    const EMPTY: LogSum = LogSum {
        m: f64::NEG_INFINITY,
        s: 0.0,
        d: 0.0,
    };

    #[inline]
    fn add(&mut self, l: f64, slope: f64) {
        if l == f64::NEG_INFINITY {
            return;
        }
        if l > self.m {
            let e = (self.m - l).exp();
            self.s = self.s * e + 1.0;
            self.d = self.d * e + slope;
            self.m = l;
        } else {
            let e = (l - self.m).exp();
            self.s += e;
            self.d += e * slope;
        }
    }

    #[inline]
    fn ln(&self) -> f64 {
        self.m + self.s.ln()
    }

    #[inline]
    fn slope(&self) -> f64 {
        self.d / self.s
    }
}

/// ln(1 + e^z) and 1/(1 + e^-z), stable for every z.
#[inline]
fn softplus_sigmoid(z: f64) -> (f64, f64) {
    let e = (-z.abs()).exp();
    let sp = z.max(0.0) + e.ln_1p();
    let sig = if z >= 0.0 {
        1.0 / (1.0 + e)
    } else {
        e / (1.0 + e)
    };
    (sp, sig)
}

/// Inverse of F_{1/2} taking and returning logarithms-safe values: eta with ln F_{1/2}(eta) = ln_y.
fn inv_f_half_ln(ln_y: f64) -> f64 {
    if ln_y < -600.0 {
        // Boltzmann limit, exact to e^-600.
        ln_y
    } else {
        inv_f_half(ln_y.exp())
    }
}

impl Problem {
    /// (ln Q+, ln Q-, h, dh/du) at reduced Fermi level u.
    #[inline]
    fn eval(&self, u: f64) -> (f64, f64, f64, f64) {
        #[cfg(test)]
        EVALS.with(|c| c.set(c.get() + 1));
        let mut pos = LogSum::EMPTY;
        let mut neg = LogSum::EMPTY;
        let (lf_p, s_p) = ln_f_half_and_slope(-u);
        pos.add(self.ln_nv + lf_p, -s_p);
        let (lf_n, s_n) = ln_f_half_and_slope(u - self.eg_red);
        neg.add(self.ln_nc + lf_n, s_n);
        pos.add(self.ln_net_pos, 0.0);
        neg.add(self.ln_net_neg, 0.0);
        for lv in &self.donors[..self.n_donors] {
            let (sp, sig) = softplus_sigmoid(lv.z0 - u);
            neg.add(lv.ln_w - sp, sig);
        }
        for lv in &self.acceptors[..self.n_acceptors] {
            let (sp, sig) = softplus_sigmoid(u - lv.z0);
            pos.add(lv.ln_w - sp, -sig);
        }
        let (lp, ln_) = (pos.ln(), neg.ln());
        (lp, ln_, lp - ln_, pos.slope() - neg.slope())
    }
}

/// Moves from `start` in direction `dir` (-1 down, +1 up) in doubling steps
/// until h has the sign of a bracket end (> 0 below the root, < 0 above).
fn widen(p: &Problem, start: f64, dir: f64) -> Option<f64> {
    let (mut u, mut step) = (start, 4.0);
    for _ in 0..40 {
        let h = p.eval(u).2;
        if h * dir < 0.0 {
            return Some(u);
        }
        u += dir * step;
        step *= 2.0;
    }
    None
}

/// Solves charge neutrality for `sample` at `t_k`.
///
/// Validates the input first ([`check_temperature`], [`check_sample`]); never
/// returns NaN: a non-finite or insufficiently balanced result is reported as
/// [`ModelError::NoConvergence`].
///
/// ```
/// use host_tools::physics::{solve, Dopant, Material, Sample, Species};
/// let s = Sample {
///     material: Material::Si,
///     donors: vec![Dopant { species: Species::P, density_cm3: 1e15 }],
///     acceptors: vec![],
/// };
/// let st = solve(&s, 300.0).unwrap();
/// assert!((st.n_cm3 / 1e15 - 1.0).abs() < 0.01);
/// ```
pub fn solve(sample: &Sample, t_k: f64) -> Result<CarrierState, ModelError> {
    let material = sample.material;
    check_temperature(material, t_k)?;
    check_sample(sample)?;

    let kt = K_B_EV_PER_K * t_k;
    let (eg_ev, nc, nv) = material.band_state(t_k);
    let eg_red = eg_ev / kt;
    let (ln_nc, ln_nv) = (nc.ln(), nv.ln());

    // Per-species totals, then one level each.
    let mut totals = [0.0f64; MAX_LEVELS];
    for d in sample.donors.iter().chain(&sample.acceptors) {
        totals[d.species as usize] += d.density_cm3;
    }
    // Every term is stored relative to the total doping, so the terms that
    // cancel in compensated samples (net doping, neutral majority dopants)
    // have logarithms near 0 and keep full relative precision.
    let dop_sum: f64 = totals.iter().sum();
    let scale = if dop_sum > 0.0 { dop_sum } else { 1.0 };
    let ln_ref = scale.ln();
    let mut p = Problem {
        ln_nc: ln_nc - ln_ref,
        ln_nv: ln_nv - ln_ref,
        eg_red,
        ln_net_pos: f64::NEG_INFINITY,
        ln_net_neg: f64::NEG_INFINITY,
        donors: [Level::default(); MAX_LEVELS],
        n_donors: 0,
        acceptors: [Level::default(); MAX_LEVELS],
        n_acceptors: 0,
    };
    let (mut nd_tot, mut na_tot) = (0.0, 0.0);
    for sp in super::dopant::Species::ALL {
        let n = totals[sp as usize];
        if n <= 0.0 {
            continue;
        }
        // check_sample guarantees the level exists.
        let Some(lv) = dopant_level(material, sp) else {
            continue;
        };
        let e_red = lv.ionization_energy_ev(n) / kt;
        let ln_g = lv.degeneracy().ln();
        let (b, one_minus_b) = lv.localized_split(n);
        let w = b * n;
        let level = Level {
            w,
            ln_w: (w / scale).ln(),
            // Not n - w: near b = 1 that difference loses all its digits.
            free: one_minus_b * n,
            // Donor: z = (E_D - E_F)/kT - ln g_D with E_D - E_v = Eg - E_dop.
            // Acceptor: z = (E_F - E_A)/kT - ln g_A with E_A - E_v = E_dop.
            z0: match lv.kind {
                DopantKind::Donor => eg_red - e_red - ln_g,
                DopantKind::Acceptor => e_red + ln_g,
            },
        };
        match lv.kind {
            DopantKind::Donor => {
                p.donors[p.n_donors] = level;
                p.n_donors += 1;
                nd_tot += n;
            }
            DopantKind::Acceptor => {
                p.acceptors[p.n_acceptors] = level;
                p.n_acceptors += 1;
                na_tot += n;
            }
        }
    }
    let net = nd_tot - na_tot;
    if net > 0.0 {
        p.ln_net_pos = (net / scale).ln();
    } else if net < 0.0 {
        p.ln_net_neg = (-net / scale).ln();
    }

    let ln_ni = 0.5 * (ln_nc + ln_nv) - 0.5 * eg_red;
    let u_i = 0.5 * eg_red + 0.5 * (ln_nv - ln_nc);
    let ln_scale = if nd_tot + na_tot > 0.0 {
        (nd_tot + na_tot).ln().max(ln_ni)
    } else {
        ln_ni
    };

    let no_conv = |residual: f64| ModelError::NoConvergence { t_k, residual };

    // Bracket starts: at lo_start holes alone exceed every negative charge,
    // at hi_start electrons exceed every positive one (Boltzmann estimate);
    // only evaluated, and widened, if a Newton step ever leaves the bracket
    // its own iterates have built (rare: the first estimate is close).
    let lo_start = (-inv_f_half_ln(ln_scale - ln_nv)).min(u_i) - 2.0;
    let hi_start = (eg_red + inv_f_half_ln(ln_scale - ln_nc)).max(u_i) + 2.0;

    // First estimate with Boltzmann bands: the single-level freeze-out
    // solution for the densest majority species, n (n + N_A) = k (N_D - N_A - n)
    // with k = (Nc/g) exp(-E_dop/kT), scaled by the complete-ionization
    // solution n_ci/net so it also covers the intrinsic regime (common
    // practice; Blakemore 1962 ch. 3).
    let ni2 = (2.0 * ln_ni).exp();
    let guess = |net: f64, minority_tot: f64, levels: &[Level], ln_k_of: &dyn Fn(f64) -> f64| {
        let n_ci = 0.5 * net + (0.25 * net * net + ni2).sqrt();
        let densest = levels.iter().fold(None::<&Level>, |best, lv| match best {
            Some(b) if b.w >= lv.w => Some(b),
            _ => Some(lv),
        });
        let n_fo = match densest {
            Some(lv) => {
                let k = ln_k_of(lv.z0).min(700.0).exp();
                let bq = k + minority_tot;
                2.0 * k * net / (bq + (bq * bq + 4.0 * k * net).sqrt())
            }
            None => net,
        };
        n_fo * n_ci / net
    };
    let mut u = if net > 0.0 {
        // Donor: ln k = ln Nc - E_dop/kT - ln g_D = ln Nc - Eg/kT + z0.
        let n0 = guess(net, na_tot, &p.donors[..p.n_donors], &|z0| {
            ln_nc - eg_red + z0
        });
        eg_red + inv_f_half_ln(n0.ln() - ln_nc)
    } else if net < 0.0 {
        // Acceptor: z0 = E_dop/kT + ln g_A, so ln k = ln Nv - z0.
        let p0 = guess(-net, nd_tot, &p.acceptors[..p.n_acceptors], &|z0| {
            ln_nv - z0
        });
        -inv_f_half_ln(p0.ln() - ln_nv)
    } else {
        u_i
    };
    if !u.is_finite() {
        u = u_i;
    }

    let (mut lo, mut hi) = (f64::NEG_INFINITY, f64::INFINITY);
    let mut ev = p.eval(u);
    let mut converged = false;
    for _ in 0..200 {
        let (_, _, h, dh) = ev;
        if h == 0.0 {
            converged = true;
            break;
        }
        if h > 0.0 {
            lo = u;
        } else if h < 0.0 {
            hi = u;
        }
        let tol = 1e-12 * (1.0 + u.abs());
        let step = -h / dh;
        if step.abs() < tol {
            // Newton converges quadratically: a step below 1e-12 (1 + |u|)
            // (possibly below one ulp of u, so it may not move u at all)
            // leaves an error far below it. Take it and stop.
            u += step;
            ev = p.eval(u);
            converged = true;
            break;
        }
        let mut next = u + step;
        if !(next > lo && next < hi) {
            // Bisect; build the missing side of the bracket first.
            if lo == f64::NEG_INFINITY {
                lo = widen(&p, lo_start, -1.0).ok_or_else(|| no_conv(f64::NAN))?;
            }
            if hi == f64::INFINITY {
                hi = widen(&p, hi_start, 1.0).ok_or_else(|| no_conv(f64::NAN))?;
            }
            next = 0.5 * (lo + hi);
        }
        u = next;
        ev = p.eval(u);
        // Bisection ends on bracket width.
        if (hi - lo) < 1e-13 * (1.0 + u.abs()) {
            converged = true;
            break;
        }
    }

    // Final state from the logarithmic terms.
    let (lq_pos, lq_neg, h, _) = ev;
    let eta_n = u - eg_red;
    let eta_p = -u;
    let ln_n = ln_nc + ln_f_half_and_slope(eta_n).0;
    let ln_p = ln_nv + ln_f_half_and_slope(eta_p).0;
    let (mut nd_ion, mut na_ion) = (0.0, 0.0);
    for lv in &p.donors[..p.n_donors] {
        // Ionized localised part: w / (1 + e^-z).
        nd_ion += lv.free + lv.w * softplus_sigmoid(lv.z0 - u).1;
    }
    for lv in &p.acceptors[..p.n_acceptors] {
        na_ion += lv.free + lv.w * softplus_sigmoid(u - lv.z0).1;
    }
    let mut den = LogSum::EMPTY;
    den.add(ln_n, 0.0);
    den.add(ln_p, 0.0);
    den.add(nd_ion.ln(), 0.0);
    den.add(na_ion.ln(), 0.0);
    // |Q+ - Q-| / den = (1 - e^-|h|) e^(max(lq) - ln den): exact to a few ulp
    // of Q (see `CarrierState::residual_bound`), and free of underflow when
    // every density is below f64's range (intrinsic 4H-SiC at 20 K).
    let ln_den = den.ln() - ln_ref;
    let residual = -(-(lq_pos - lq_neg).abs()).exp_m1() * (lq_pos.max(lq_neg) - ln_den).exp();

    let state = CarrierState {
        t_k,
        eg_ev,
        ni_cm3: ln_ni.exp(),
        nc_cm3: nc,
        nv_cm3: nv,
        n_cm3: ln_n.exp(),
        p_cm3: ln_p.exp(),
        donors_ionized_cm3: nd_ion,
        acceptors_ionized_cm3: na_ion,
        donors_total_cm3: nd_tot,
        acceptors_total_cm3: na_tot,
        fermi_from_ev_ev: u * kt,
        neutrality_residual: residual,
        eta_n,
        eta_p,
    };
    if !converged || residual.is_nan() || residual > state.residual_bound() || !all_finite(&state) {
        return Err(no_conv(if residual.is_finite() { residual } else { h }));
    }
    Ok(state)
}

fn all_finite(s: &CarrierState) -> bool {
    [
        s.eg_ev,
        s.ni_cm3,
        s.nc_cm3,
        s.nv_cm3,
        s.n_cm3,
        s.p_cm3,
        s.donors_ionized_cm3,
        s.acceptors_ionized_cm3,
        s.fermi_from_ev_ev,
        s.neutrality_residual,
        s.eta_n,
        s.eta_p,
    ]
    .iter()
    .all(|x| x.is_finite())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::check::rel;
    use crate::physics::dopant::Species;

    fn sample(m: Material, donors: &[(Species, f64)], acceptors: &[(Species, f64)]) -> Sample {
        Sample::new(m, donors, acceptors)
    }

    #[test]
    fn rel_helper_can_fail() {
        assert!(rel(1.1, 1.0) > 0.05);
    }

    /// Freeze-out: Si:P 1e15 at 20-40 K. With eta_n << 0 and no compensation
    /// the neutrality reduces to the textbook single-level quadratic
    /// n^2/(N_D - n) = (Nc/g_D) exp(-E_D/kT) (Blakemore 1962, "Semiconductor
    /// Statistics", ch. 3; common practice). Boltzmann differs from
    /// Fermi-Dirac by F_{1/2}(eta)/e^eta - 1 = -e^eta/2^1.5 + ..., so the
    /// tolerance is e^eta_n (<= 3e-5 here) plus 1e-9 for the solver.
    #[test]
    fn freeze_out_matches_single_level_formula() {
        let n_d = 1e15;
        let s = sample(Material::Si, &[(Species::P, n_d)], &[]);
        let lv = dopant_level(Material::Si, Species::P).unwrap();
        for t in [20.0, 25.0, 30.0, 40.0] {
            let st = solve(&s, t).unwrap();
            let kt = K_B_EV_PER_K * t;
            let b = lv.localized_fraction(n_d);
            let k = st.nc_cm3 / 2.0 * (-lv.ionization_energy_ev(n_d) / kt).exp();
            // n^2 + k n - b N k = 0 for the localised part; the (1-b) N part is
            // always ionized: n = (1-b)N + n_loc, solved exactly below.
            let free = (1.0 - b) * n_d;
            // n (n - free) ... -> n^2 + (k - free) n - (free + b N) k = 0
            let bb = k - free;
            let expected = 0.5 * (-bb + (bb * bb + 4.0 * n_d * k).sqrt());
            assert!(
                rel(st.n_cm3, expected) < st.eta_n.exp() + 1e-9,
                "T {t}: got {:e} expected {expected:e}",
                st.n_cm3
            );
            assert!(st.donors_ionized_cm3 / n_d < 0.05, "T {t}: not frozen out");
        }
    }

    /// Extrinsic plateau: Si:P 1e15 is more than 99 % ionized and n = N_D to
    /// within 1 % from 150 K to 400 K (Sze & Ng 2007, Ch. 1 Fig. 22, the
    /// n vs T plot for N_D = 1e15: flat between ~100 K and ~450 K).
    #[test]
    fn extrinsic_plateau() {
        let s = sample(Material::Si, &[(Species::P, 1e15)], &[]);
        let mut t = 150.0;
        while t <= 400.0 {
            let st = solve(&s, t).unwrap();
            assert!(rel(st.n_cm3, 1e15) < 0.01, "T {t}: n {:e}", st.n_cm3);
            t += 10.0;
        }
    }

    /// Intrinsic takeover: where n_i(T) = N_D = 1e15 the complete-ionization
    /// solution is n = N_D (1 + sqrt 5)/2 (exact algebra of n - n_i^2/n = N_D).
    /// Sze & Ng 2007 Ch. 1 Fig. 22 places the takeover for 1e15 at ~ 500-
    /// 560 K (read from the plot, common practice); we require 500-580 K.
    /// 0.5 % covers the ionization deficit (< 0.1 %) and the Fermi-Dirac
    /// correction (eta ~ -11, negligible).
    #[test]
    fn intrinsic_takeover() {
        let (mut lo, mut hi) = (300.0, 900.0);
        for _ in 0..60 {
            let mid = 0.5 * (lo + hi);
            if Material::Si.ni_cm3(mid) < 1e15 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let t_i = 0.5 * (lo + hi);
        assert!((500.0..580.0).contains(&t_i), "takeover at {t_i} K");
        let st = solve(&sample(Material::Si, &[(Species::P, 1e15)], &[]), t_i).unwrap();
        let golden = 0.5 * (1.0 + 5f64.sqrt());
        assert!(
            rel(st.n_cm3, 1e15 * golden) < 0.005,
            "n {:e} at {t_i} K",
            st.n_cm3
        );
    }

    /// Altermatt et al. 2006 II, Fig. 5: at 300 K the ionized fraction of
    /// Si:P has a minimum of ~0.76 and Si:B of ~0.73 near 1e18-3e18 cm^-3,
    /// returning to ~1 at 1e20 (minima read from that figure, recalled from
    /// memory). Their figure uses Boltzmann statistics and this model
    /// Fermi-Dirac bands, which moves the minimum by a few hundredths (this
    /// model gives ~0.78 for P), so we accept +/- 0.04.
    #[test]
    fn altermatt_ionization_minimum() {
        for (sp, kind, expected) in [
            (Species::P, DopantKind::Donor, 0.76),
            (Species::B, DopantKind::Acceptor, 0.73),
        ] {
            let mut min: f64 = 1.0;
            let mut n = 1e17;
            while n <= 1e20 {
                let s = match kind {
                    DopantKind::Donor => sample(Material::Si, &[(sp, n)], &[]),
                    DopantKind::Acceptor => sample(Material::Si, &[], &[(sp, n)]),
                };
                let st = solve(&s, 300.0).unwrap();
                let ion = (st.donors_ionized_cm3 + st.acceptors_ionized_cm3) / n;
                min = min.min(ion);
                n *= 1.2;
            }
            assert!((min - expected).abs() < 0.04, "{sp}: minimum {min}");
            let s = match kind {
                DopantKind::Donor => sample(Material::Si, &[(sp, 1e20)], &[]),
                DopantKind::Acceptor => sample(Material::Si, &[], &[(sp, 1e20)]),
            };
            let st = solve(&s, 300.0).unwrap();
            let ion = (st.donors_ionized_cm3 + st.acceptors_ionized_cm3) / 1e20;
            assert!(ion > 0.98, "{sp}: ionization at 1e20 {ion}");
        }
    }

    /// Undoped crystals: n = p exactly (neutrality), and n = n_i where the
    /// bands are non-degenerate (Boltzmann definition of n_i; deviation
    /// e^eta/2^1.5 < 1e-8 for Si at 300 K). In InSb at 700 K the bands are
    /// degenerate (eta ~ +1), so n < n_i there (Fermi-Dirac suppression).
    #[test]
    fn intrinsic_samples() {
        for m in Material::ALL {
            for t in [20.0, 300.0, t_max_k(m)] {
                let st = solve(&sample(m, &[], &[]), t).unwrap();
                if st.n_cm3 > 1e-300 {
                    assert!(rel(st.n_cm3, st.p_cm3) < 1e-9, "{m} {t} K");
                }
            }
        }
        let st = solve(&sample(Material::Si, &[], &[]), 300.0).unwrap();
        assert!(rel(st.n_cm3, st.ni_cm3) < 1e-8);
        let st = solve(&sample(Material::InSb, &[], &[]), 700.0).unwrap();
        assert!(st.eta_n > 0.0 && st.n_cm3 < 0.9 * st.ni_cm3, "{st:?}");
    }

    /// Bad inputs give typed errors, never NaN.
    #[test]
    fn validation() {
        let ok = sample(Material::Si, &[(Species::P, 1e15)], &[]);
        for t in [19.9, 1000.1, f64::NAN, f64::INFINITY, -5.0] {
            assert!(
                matches!(solve(&ok, t), Err(ModelError::TemperatureOutOfRange { .. })),
                "T {t}"
            );
        }
        assert!(matches!(
            solve(&sample(Material::InSb, &[], &[]), 750.0),
            Err(ModelError::TemperatureOutOfRange { max_k, .. }) if max_k == 700.0
        ));
        for n in [1e9, 2e21, f64::NAN, -1e15] {
            assert!(
                matches!(
                    solve(&sample(Material::Si, &[(Species::P, n)], &[]), 300.0),
                    Err(ModelError::DensityOutOfRange { .. })
                ),
                "density {n}"
            );
        }
        // Boron listed as a donor, zinc in silicon.
        for s in [
            sample(Material::Si, &[(Species::B, 1e15)], &[]),
            sample(Material::Si, &[], &[(Species::Zn, 1e15)]),
        ] {
            assert!(matches!(
                solve(&s, 300.0),
                Err(ModelError::UnknownSpecies { .. })
            ));
        }
    }

    /// Exact compensation at 20 K in 4H-SiC: all densities far below f64's
    /// range, yet the solver balances the dopant charges exactly.
    #[test]
    fn extreme_compensation_low_t() {
        let s = sample(
            Material::Sic4H,
            &[(Species::N, 1e15)],
            &[(Species::Al, 1e15)],
        );
        let st = solve(&s, 20.0).unwrap();
        assert!(st.neutrality_residual <= RESIDUAL_BOUND);
        assert!(rel(st.donors_ionized_cm3, 1e15) < 1e-12);
        assert!(rel(st.acceptors_ionized_cm3, 1e15) < 1e-12);
    }
}

#[cfg(test)]
mod eval_count {
    use super::*;
    use crate::physics::dopant::Species;

    /// Average number of neutrality evaluations per solve over a sweep: the
    /// cost model of the solver (each evaluation is ~20 transcendental calls).
    #[test]
    fn evaluations_per_solve() {
        let s = Sample::new(
            Material::Si,
            &[(Species::P, 2e15), (Species::As, 5e14)],
            &[(Species::B, 3e14)],
        );
        EVALS.with(|c| c.set(0));
        let mut worst = 0;
        for t in 20..=1000 {
            let before = EVALS.with(|c| c.get());
            solve(&s, t as f64).unwrap();
            let n = EVALS.with(|c| c.get()) - before;
            worst = worst.max(n);
        }
        let avg = EVALS.with(|c| c.get()) as f64 / 981.0;
        eprintln!("evals per solve: avg {avg:.2} worst {worst}");
        // Measured 3.59 and 6; the bounds flag a regression of the first
        // estimate or of the Newton safeguard, not noise (deterministic count).
        assert!(avg < 5.0 && worst <= 10, "avg {avg} worst {worst}");
    }
}
