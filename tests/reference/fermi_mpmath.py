#!/usr/bin/env python3
"""Independent reference for semidrift's carrier statistics, in mpmath.

Reads one JSON object on stdin:
  {"fermi": [eta, ...],
   "neutrality": [{"kt_ev", "eg_ev", "nc_cm3", "nv_cm3",
                   "levels": [{"kind": "donor"|"acceptor", "n_cm3", "e_ev", "b", "g"}]}]}
and prints one JSON object on stdout:
  {"fermi": [[F_1/2, F_-1/2], ...],
   "neutrality": [{"ef_ev", "log10_n", "log10_p", "nd_ion_cm3", "na_ion_cm3"}]}

Fermi-Dirac integrals in Blakemore's normalisation,
F_j(eta) = 1/Gamma(j+1) int_0^inf x^j/(1+exp(x-eta)) dx = -Li_{j+1}(-e^eta)
(DLMF 25.12.16), evaluated at 34 significant digits: for eta <= -1.5 by the
alternating series sum_k (-1)^(k+1) e^(k eta)/k^(j+1) (DLMF 25.12.10); for
|eta| < 1.5 by the Taylor series around 0, F_j(eta) = sum_k eta^k/k!
altzeta(j+1-k) (dF_j/deta = F_{j-1}, F_s(0) = Dirichlet eta(s+1), radius pi);
for 1.5 <= eta < 10 by mpmath's tanh-sinh quadrature of the integral after
x = t^2; beyond by mpmath's polylog. Nothing here shares code or coefficients with the Rust
implementation (Antia 1993 rational functions).

Neutrality p - n + N_D+ - N_A- = 0 is solved for E_F (eV above E_v) directly
in linear arithmetic at 40 + Eg/(kT ln 10) digits (mpmath has no exponent
underflow), by bisection to 1e-25 eV, with
  n = Nc F_1/2((E_F - Eg)/kT),  p = Nv F_1/2(-E_F/kT),
  N_D+ = N - b N / (1 + exp((E_D - E_F)/kT)/g),  E_D = Eg - e,
  N_A- = N - b N / (1 + exp((E_F - E_A)/kT)/g),  E_A = e.
Densities are returned as log10 so values like 1e-800 survive JSON.
"""
import json
import sys

try:
    import mpmath as mp
except ImportError:  # the Rust test turns this exit code into a clear failure
    sys.stderr.write("fermi_mpmath.py: Python package mpmath is missing "
                     "(run scripts/install-prereqs.sh)\n")
    sys.exit(3)


FD_DPS = 34
# |eta| below this uses the Taylor series (ratio |eta|/pi ~ 0.48 per term).
TAYLOR_RADIUS = 1.5
_TAYLOR = {}


def _taylor_coeffs(j):
    """altzeta(j + 1 - k)/k! for k = 0..N, cached per order."""
    if j not in _TAYLOR:
        with mp.workdps(FD_DPS + 10):
            _TAYLOR[j] = [mp.altzeta(j + 1 - k) / mp.factorial(k) for k in range(160)]
    return _TAYLOR[j]


def fd(j, eta):
    """Normalised complete Fermi-Dirac integral of order j (34 digits)."""
    with mp.workdps(FD_DPS + 10):
        eta = mp.mpf(eta)
        if eta <= -TAYLOR_RADIUS:
            x = mp.exp(eta)
            total, k = mp.mpf(0), 1
            while True:
                term = x ** k / mp.mpf(k) ** (j + 1)
                total += term if k % 2 else -term
                if term < total * mp.mpf(10) ** (-(FD_DPS + 5)):
                    break
                k += 1
            return +total
        if eta < TAYLOR_RADIUS:
            total = mp.mpf(0)
            for k, c in enumerate(_taylor_coeffs(j)):
                term = c * eta ** k
                total += term
                if k > 10 and abs(term) < abs(total) * mp.mpf(10) ** (-(FD_DPS + 5)):
                    break
            return +total
        if eta >= 10:
            return mp.re(-mp.polylog(j + 1, -mp.exp(eta)))
    with mp.workdps(FD_DPS + 2):
        f = lambda t: 2 * t ** (2 * j + 1) / (1 + mp.exp(t * t - eta))
        r = mp.sqrt(eta)
        return mp.quad(f, [0, r, r + 6, mp.inf]) / mp.gamma(j + 1)


def charge(case, ef):
    kt = mp.mpf(case["kt_ev"])
    eg = mp.mpf(case["eg_ev"])
    n = mp.mpf(case["nc_cm3"]) * fd(mp.mpf(1) / 2, (ef - eg) / kt)
    p = mp.mpf(case["nv_cm3"]) * fd(mp.mpf(1) / 2, -ef / kt)
    nd = na = mp.mpf(0)
    for lv in case["levels"]:
        big_n, e, b, g = (mp.mpf(lv[k]) for k in ("n_cm3", "e_ev", "b", "g"))
        if lv["kind"] == "donor":
            nd += big_n - b * big_n / (1 + mp.exp((eg - e - ef) / kt) / g)
        else:
            na += big_n - b * big_n / (1 + mp.exp((ef - e) / kt) / g)
    return p - n + nd - na, n, p, nd, na


def solve(case):
    eg = mp.mpf(case["eg_ev"])
    lo, hi = mp.mpf(-2), eg + 2
    q_lo, q_hi = charge(case, lo)[0], charge(case, hi)[0]
    if not (q_lo > 0 > q_hi):
        raise RuntimeError("no bracket for %r" % case)
    # Plain bisection: slow but obviously right, and immune to the huge
    # dynamic range of the charge (e^1000 at the bracket ends at 20 K).
    for _ in range(400):
        mid = (lo + hi) / 2
        if charge(case, mid)[0] > 0:
            lo = mid
        else:
            hi = mid
        if hi - lo < mp.mpf("1e-25"):
            break
    ef = (lo + hi) / 2
    _, n, p, nd, na = charge(case, ef)
    log10 = lambda x: float(mp.log10(x)) if x > 0 else -1e300
    return {"ef_ev": float(ef), "log10_n": log10(n), "log10_p": log10(p),
            "nd_ion_cm3": float(nd), "na_ion_cm3": float(na)}


def main():
    req = json.load(sys.stdin)
    out = {"fermi": [], "neutrality": []}
    mp.mp.dps = 40
    for eta in req.get("fermi", []):
        e = mp.mpf(eta)
        out["fermi"].append([float(fd(mp.mpf(1) / 2, e)), float(fd(-mp.mpf(1) / 2, e))])
    for case in req.get("neutrality", []):
        # Exactly compensated samples balance N_D+ against N_A- to within
        # ~N exp(-Eg/2kT); carry Eg/(kT ln 10) digits beyond 40 so the naive
        # charge sum keeps its significance.
        mp.mp.dps = 40 + int(case["eg_ev"] / (case["kt_ev"] * 2.302585))
        out["neutrality"].append(solve(case))
    json.dump(out, sys.stdout)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
