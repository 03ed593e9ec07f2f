//! Test helper shared by the physics unit tests.

/// Relative difference `|a - b| / |b|`, the comparison the physics tables use.
pub(crate) fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// Relative deviation check that names the quantity, got and expected on
/// failure: `Ok` when `|got - expected| <= tol |expected|`.
pub(crate) fn check_rel(what: &str, got: f64, expected: f64, tol: f64) -> Result<(), String> {
    let rel = rel(got, expected);
    if rel <= tol {
        Ok(())
    } else {
        Err(format!(
            "{what}: got {got}, expected {expected}, rel {rel:.4e} > {tol}"
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn check_rel_can_fail() {
        assert!(check_rel("x", 1.1, 1.0, 0.05).is_err());
        assert!(check_rel("x", 1.0001, 1.0, 1e-6).is_err());
        assert!(check_rel("x", 1.01, 1.0, 0.05).is_ok());
    }
}
