//! Qualification on every simulated truth variant: a 20-part qualification
//! lot (every 15 K from -40 to 125 C plus the production temperatures, 5
//! stimuli) teaches the design; a production lot calibrated at -20/25/85 C
//! x 0/5/10 bar is then checked at the held-out temperatures x 5 stimuli,
//! against the physics-only fit and the polynomial at equal memory. The
//! truths are published models other than the fitted one, with a per-part
//! 0.1 % nonlinearity (invented, simulated data: an internal test, not an
//! external check). `SEMIDRIFT_SLOW=1` uses 100 production parts and builds,
//! verifies and applies a 100 ppm table for every one (docs/qualification.md's
//! figures) instead of 20 parts and one table, and prints the table.

use host_tools::station::apply::{ImageCompensation, apply_rows};
use host_tools::station::chamber::ChamberData;
use host_tools::station::compare::{compare, compare_qualified};
use host_tools::station::design::{self, ProductionPlan};
use host_tools::station::lot::{calibrate_lot, calibrate_lot_with};
use host_tools::station::model_shapes::shapes_for;
use host_tools::station::pipeline;
use host_tools::station::scenario::Scenario;
use host_tools::station::simulate::{Plan, draw_parts, measure};
use host_tools::station::truth::VARIANTS;
use rayon::prelude::*;

fn lot_rows(sc: &Scenario, n: usize, seed: u64, plan: &Plan) -> ChamberData {
    let parts = draw_parts(sc, n, seed);
    ChamberData::from(measure(sc, &parts, plan, seed).unwrap())
}

#[test]
fn qualified_design_holds_on_every_truth_variant() {
    let slow = std::env::var_os("SEMIDRIFT_SLOW").is_some();
    let n = if slow { 100 } else { 20 };
    let mut table = String::from(
        "| truth variant | physics only inside / -40..125 | qualified inside / -40..125 | polynomial (10 numbers) inside / -40..125 | model error budgeted | tables at 100 ppm: built of parts, verified, worst apply |\n|---|---|---|---|---|---|\n",
    );
    for (name, truth) in VARIANTS {
        let mut sc = Scenario::well_logger().with_demo_truth();
        sc.truth = truth;
        let curves = shapes_for(&sc).unwrap();
        let qual = lot_rows(
            &sc,
            20,
            7_001,
            &Plan {
                temps_c: sc.qualification_plan_temps_c(),
                stimuli: sc.qualification_stimuli(),
            },
        );
        let plan = ProductionPlan {
            temps_c: sc.cal_temps_c.clone(),
            stimuli: sc.stimuli.clone(),
        };
        let d = design::qualify(&sc, &curves, &qual, "qual.csv", &plan).unwrap();
        let cal = lot_rows(
            &sc,
            n,
            1,
            &Plan {
                temps_c: sc.cal_temps_c.clone(),
                stimuli: sc.stimuli.clone(),
            },
        );
        let mut check_t = sc.check_temps_c.clone();
        check_t.sort_by(f64::total_cmp);
        let check = lot_rows(
            &sc,
            n,
            1,
            &Plan {
                temps_c: check_t,
                stimuli: sc.check_stimuli(),
            },
        );
        let physics = calibrate_lot(&sc, &curves, &cal, &host_tools::station::lot::Silent);
        let fitted = calibrate_lot_with(
            &sc,
            &curves,
            &cal,
            Some(&d),
            &host_tools::station::lot::Silent,
        );
        let ok: Vec<_> = fitted.iter().filter(|p| p.is_ok()).collect();
        let p = compare(&physics, &curves, &check);
        let q = compare_qualified(&fitted, &curves, &check);
        // Tables at a 100 ppm budget for every accepted part, verified on
        // the dense grid, and the flashed image applied at the held-out
        // temperatures inside the operating range.
        let groups = check.by_serial();
        let (lo, hi) = sc.range_c;
        let tried = ok.len().min(if slow { n } else { 1 });
        let per_part: Vec<(bool, bool, f64)> = ok[..tried]
            .par_iter()
            .map(|part| {
                let Ok(t) = pipeline::build_table(part, &curves, 100.0) else {
                    return (false, false, 0.0);
                };
                let (nt, ns) = pipeline::dense_counts(&t.plan);
                let v = pipeline::verify(&t.image, part, &curves, 100.0, nt, ns).unwrap();
                let comp =
                    ImageCompensation::new(&t.image, sc.output_adc.lsb(), sc.signal_adc.lsb())
                        .unwrap();
                let rows: Vec<_> = groups[part.serial.as_str()]
                    .iter()
                    .copied()
                    .filter(|r| r.chamber_c >= lo && r.chamber_c <= hi)
                    .collect();
                let worst = apply_rows(part, &curves, &comp, &rows)
                    .iter()
                    .filter(|r| !r.clipped)
                    .fold(0.0f64, |m, r| m.max(r.error_ppm.abs()));
                (true, v.pass, worst)
            })
            .collect();
        let built = per_part.iter().filter(|p| p.0).count();
        let verified = per_part.iter().filter(|p| p.1).count();
        let worst_apply = per_part.iter().fold(0.0f64, |m, p| m.max(p.2));
        let all = |w: host_tools::station::compare::Worst| w.inside_ppm.max(w.outside_ppm);
        table.push_str(&format!(
            "| {name} | {:.0} / {:.0} | {:.0} / {:.0} | {:.0} / {:.0} | {:.0} | {built}/{tried}, {verified}/{built}, {worst_apply:.0} ppm |\n",
            p.physics.inside_ppm,
            all(p.physics),
            q.qualified.inside_ppm,
            all(q.qualified),
            q.polynomial.inside_ppm,
            all(q.polynomial),
            d.plan_error.operating_range_ppm,
        ));
        // Every part of the lot is accepted on its design (none is an
        // outlier: they come from the same process as the qualification lot).
        assert_eq!(ok.len(), n, "{name}: {} of {n} accepted", ok.len());
        // The acceptance figures of a qualified design: 50 ppm of span
        // inside -20..85 C, 400 ppm over -40..125 C. The 20 parts are the
        // first 20 of the 100-part lot of docs/qualification.md (the same
        // seed), whose worst are 29..40 and 111..231 ppm; the design
        // beats the equal-memory polynomial 20x.
        assert!(q.qualified.inside_ppm <= 50.0, "{name}: {q:?}");
        assert!(all(q.qualified) <= 400.0, "{name}: {q:?}");
        assert!(
            all(q.polynomial) > 20.0 * all(q.qualified),
            "{name}: polynomial {:?} vs {:?}",
            q.polynomial,
            q.qualified
        );
        // The physics-only fit cannot take out the nonlinearity: the design
        // must beat it inside the calibrated span.
        assert!(
            p.physics.inside_ppm > 3.0 * q.qualified.inside_ppm,
            "{name}"
        );
        assert_eq!((built, verified), (tried, tried), "{name}");
        assert!(
            worst_apply <= 100.0,
            "{name}: flashed images {worst_apply} ppm"
        );
    }
    if slow {
        println!("{table}");
    }
}
