//! Smith's (1954) room-temperature piezoresistance coefficients of silicon and
//! their combination into the longitudinal and transverse coefficients of
//! resistors on a (100) die.
//!
//! Source: C. S. Smith, "Piezoresistance effect in germanium and silicon",
//! Phys. Rev. 94, 42 (1954), Table I (silicon rows). The numbers below are
//! recalled from memory (p-type row pi11 = 6.6, pi12 = -1.1, pi44 = 138.1,
//! in 1e-11 /Pa); the paper itself was not re-read.

use serde::{Deserialize, Serialize};

/// One unit of Smith's table: 1e-11 per pascal (1e-12 cm^2/dyn).
pub const UNIT_PER_PA: f64 = 1e-11;

/// Room temperature of Smith's measurements, taken as 300 K (common practice).
pub const SMITH_T_K: f64 = 300.0;

/// The three independent piezoresistance coefficients of a cubic crystal, in 1/Pa.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PiCoefficients {
    /// pi11 in 1/Pa.
    pub pi11_per_pa: f64,
    /// pi12 in 1/Pa.
    pub pi12_per_pa: f64,
    /// pi44 in 1/Pa.
    pub pi44_per_pa: f64,
}

impl PiCoefficients {
    /// All three coefficients multiplied by `factor` (Kanda's P(N,T) ratio).
    pub fn scaled(self, factor: f64) -> PiCoefficients {
        PiCoefficients {
            pi11_per_pa: self.pi11_per_pa * factor,
            pi12_per_pa: self.pi12_per_pa * factor,
            pi44_per_pa: self.pi44_per_pa * factor,
        }
    }

    /// Coefficient for current and stress both along `direction` (longitudinal).
    pub fn longitudinal(self, direction: Direction) -> f64 {
        match direction {
            Direction::D110 => 0.5 * (self.pi11_per_pa + self.pi12_per_pa + self.pi44_per_pa),
            Direction::D100 => self.pi11_per_pa,
        }
    }

    /// Coefficient for current along `direction` and stress perpendicular to
    /// it in the (100) plane (transverse).
    pub fn transverse(self, direction: Direction) -> f64 {
        match direction {
            Direction::D110 => 0.5 * (self.pi11_per_pa + self.pi12_per_pa - self.pi44_per_pa),
            Direction::D100 => self.pi12_per_pa,
        }
    }
}

/// In-plane crystal direction of the resistors on a (100) die.
///
/// The formulas for the primed coefficients are the standard rotation of the
/// cubic piezoresistance tensor (Smith 1954; Kanda 1982, IEEE Trans. Electron
/// Devices 29, 64, eq. for (001) plane): along <110>,
/// pi_l = (pi11 + pi12 + pi44)/2 and pi_t = (pi11 + pi12 - pi44)/2; along
/// <100>, pi_l = pi11 and pi_t = pi12.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Direction {
    /// <110>: the usual choice for p-type resistors (large pi44).
    #[serde(rename = "110")]
    D110,
    /// <100>: the usual choice for n-type resistors (large pi11).
    #[serde(rename = "100")]
    D100,
}

/// Majority-carrier type of a resistor.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Carrier {
    /// Holes (acceptor-doped).
    P,
    /// Electrons (donor-doped).
    N,
}

/// One row of Smith's table: the sample's type and resistivity and its coefficients.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SmithRow {
    /// Majority carrier.
    pub carrier: Carrier,
    /// Resistivity of the measured sample in ohm cm.
    pub rho_ohm_cm: f64,
    /// Coefficients at [`SMITH_T_K`].
    pub pi: PiCoefficients,
}

/// p-type silicon, 7.8 ohm cm (Smith 1954, Table I).
pub const SMITH_P_SI: SmithRow = SmithRow {
    carrier: Carrier::P,
    rho_ohm_cm: 7.8,
    pi: PiCoefficients {
        pi11_per_pa: 6.6 * UNIT_PER_PA,
        pi12_per_pa: -1.1 * UNIT_PER_PA,
        pi44_per_pa: 138.1 * UNIT_PER_PA,
    },
};

/// n-type silicon, 11.7 ohm cm (Smith 1954, Table I).
pub const SMITH_N_SI: SmithRow = SmithRow {
    carrier: Carrier::N,
    rho_ohm_cm: 11.7,
    pi: PiCoefficients {
        pi11_per_pa: -102.2 * UNIT_PER_PA,
        pi12_per_pa: 53.4 * UNIT_PER_PA,
        pi44_per_pa: -13.6 * UNIT_PER_PA,
    },
};

/// Smith's row for a carrier type.
pub fn smith_row(carrier: Carrier) -> SmithRow {
    match carrier {
        Carrier::P => SMITH_P_SI,
        Carrier::N => SMITH_N_SI,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative comparison helper (1e-12: the formulas are exact sums of
    /// decimal inputs, so only rounding separates them).
    fn near(got: f64, want: f64) -> bool {
        (got - want).abs() <= 1e-12 * want.abs().max(1e-30)
    }

    #[test]
    fn near_can_fail() {
        assert!(!near(1.0, 1.0001));
    }

    #[test]
    fn primed_coefficients_of_the_100_plane() {
        // Expected values: the rotation formulas applied by hand to Smith's
        // table (Smith 1954 Table I; the p-type <110> pair 71.8 / -66.3 is the
        // commonly quoted one, common practice).
        let table = [
            (Carrier::P, Direction::D110, 71.8, -66.3),
            (Carrier::P, Direction::D100, 6.6, -1.1),
            (Carrier::N, Direction::D110, -31.2, -17.6),
            (Carrier::N, Direction::D100, -102.2, 53.4),
        ];
        for (carrier, dir, l, t) in table {
            let pi = smith_row(carrier).pi;
            let (gl, gt) = (
                pi.longitudinal(dir) / UNIT_PER_PA,
                pi.transverse(dir) / UNIT_PER_PA,
            );
            assert!(
                near(gl, l),
                "{carrier:?} {dir:?} pi_l: got {gl}, expected {l}"
            );
            assert!(
                near(gt, t),
                "{carrier:?} {dir:?} pi_t: got {gt}, expected {t}"
            );
        }
    }
}
