//! The commented example specs printed by `semidrift element --example`,
//! set in the demo scenarios of the design (invented parts).

use super::spec::{ElementKind, ElementSpec, parse_spec};

/// Well-level logger bridge: 10 bar gauge die, boron arms near 2e18 cm^-3,
/// 3.3 V constant voltage, 24-bit ADC, -20..85 C.
pub const BRIDGE_EXAMPLE: &str = include_str!("examples/bridge.toml");

/// Battery-pack current sensor: n-type Si Hall plate, +/-200 A, current bias,
/// 16-bit ADC, -40..125 C.
pub const HALL_EXAMPLE: &str = include_str!("examples/hall.toml");

/// The example text of a kind.
pub fn example_text(kind: ElementKind) -> &'static str {
    match kind {
        ElementKind::Bridge => BRIDGE_EXAMPLE,
        ElementKind::Hall => HALL_EXAMPLE,
    }
}

/// The parsed example of a kind.
///
/// # Panics
/// Never in a released build: the examples are compiled in and a unit test
/// parses both.
pub fn example_spec(kind: ElementKind) -> ElementSpec {
    match parse_spec(example_text(kind)) {
        Ok(spec) => spec,
        Err(e) => panic!("built-in {} example does not parse: {e}", kind.name()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn both_examples_parse_and_have_their_kind() {
        for kind in [ElementKind::Bridge, ElementKind::Hall] {
            let spec = parse_spec(example_text(kind));
            assert!(spec.is_ok(), "{} example: {:?}", kind.name(), spec.err());
            assert_eq!(spec.map(|s| s.kind()).ok(), Some(kind));
        }
    }
}
