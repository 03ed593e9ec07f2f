//! The comparison of the demo table in docs/station.md ("physics only" against
//! "polynomial"): on the same simulated lot and the same three
//! calibration temperatures, the physics calibration (8 stored numbers per
//! part) against the usual polynomial (quadratic offset and span in
//! temperature, temperature from a linear resistance map: 8 numbers), judged
//! at held-out temperatures over -40..125 C.
//!
//! Not circular: the simulated truth (host_tools::station::truth) uses
//! another published resistivity model (Arora 1982, complete ionization),
//! packaging-stress drift and a random smooth term per part, none of which
//! the fitted model contains. Invented data: this checks our method against
//! the usual practice, not against a measurement.

use host_tools::station::chamber::ChamberData;
use host_tools::station::compare::{Comparison, compare};
use host_tools::station::lot::calibrate_lot;
use host_tools::station::model_shapes::shapes_for;
use host_tools::station::scenario::Scenario;
use host_tools::station::simulate::{Plan, draw_parts, measure};

/// Runs the comparison on a lot of `n` parts; check temperatures span -40..125 C.
fn run(scenario: &Scenario, n: usize, seed: u64) -> Comparison {
    let curves = shapes_for(scenario).unwrap();
    let parts = draw_parts(scenario, n, seed);
    let cal = Plan {
        temps_c: scenario.cal_temps_c.clone(),
        stimuli: scenario.stimuli.clone(),
    };
    let check = Plan {
        temps_c: vec![
            -40.0, -30.0, -10.0, 0.0, 10.0, 40.0, 55.0, 70.0, 100.0, 115.0, 125.0,
        ],
        stimuli: scenario.stimuli.clone(),
    };
    let cal_rows = ChamberData::from(measure(scenario, &parts, &cal, seed).unwrap());
    let check_rows = ChamberData::from(measure(scenario, &parts, &check, seed).unwrap());
    let fitted = calibrate_lot(
        scenario,
        &curves,
        &cal_rows,
        &host_tools::station::lot::Silent,
    );
    compare(&fitted, &curves, &check_rows)
}

/// The project's goal: at equal memory and three calibration temperatures, at
/// least 5 times smaller worst-case error than the polynomial. The factor 5
/// is that goal, set before the comparison was run, not a tuned tolerance; on the 50-part
/// demo lots the measured factors are 5.6 (well logger outside the
/// calibrated span) to 23 (docs/station.md).
#[test]
fn physics_beats_polynomial_five_times_at_equal_memory() {
    for scenario in [Scenario::well_logger(), Scenario::battery_current()] {
        let c = run(&scenario, 10, 77);
        println!("{}: {}", scenario.name, serde_json::to_string(&c).unwrap());
        assert_eq!(c.parts, 10, "{}: every part must calibrate", scenario.name);
        assert!(
            c.physics_coefficients <= c.polynomial_coefficients,
            "physics must not store more numbers than the polynomial"
        );
        for (region, phys, poly) in [
            ("inside", c.physics.inside_ppm, c.polynomial.inside_ppm),
            ("outside", c.physics.outside_ppm, c.polynomial.outside_ppm),
        ] {
            if poly == 0.0 {
                // No held-out point in this region (battery: calibrated at
                // the range ends, so every check point is inside).
                assert_eq!(phys, 0.0);
                continue;
            }
            assert!(
                phys * 5.0 <= poly,
                "{} {region}: physics {phys:.0} ppm, polynomial {poly:.0} ppm (need 5x)",
                scenario.name
            );
        }
    }
}

/// Parts calibrated at only two temperatures are rejected by `calibrate`
/// and left out of the comparison instead of counted with a bad fit.
#[test]
fn comparison_skips_parts_that_did_not_calibrate() {
    let scenario = Scenario::well_logger();
    let curves = shapes_for(&scenario).unwrap();
    let parts = draw_parts(&scenario, 2, 5);
    let cal = Plan {
        temps_c: vec![-20.0, 85.0],
        stimuli: scenario.stimuli.clone(),
    };
    let rows = ChamberData::from(measure(&scenario, &parts, &cal, 5).unwrap());
    let fitted = calibrate_lot(&scenario, &curves, &rows, &host_tools::station::lot::Silent);
    let c = compare(&fitted, &curves, &rows);
    assert_eq!((c.parts, c.skipped), (0, 2), "{c:?}");
}
