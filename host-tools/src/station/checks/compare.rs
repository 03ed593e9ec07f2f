//! The comparison docs/station.md reports: physics calibration against the usual
//! polynomial, on the same lot and the same calibration points, judged at
//! held-out temperatures inside and outside the calibrated span.

use crate::station::apply::{ModelCompensation, PolyCompensation, apply_rows};
use crate::station::chamber::ChamberData;
use crate::station::curves::ShapeCurves;
use crate::station::part_file::PartFile;

/// Worst-case errors of one method, ppm of span.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize)]
pub struct Worst {
    /// Worst |error| at held-out temperatures inside the calibrated span.
    pub inside_ppm: f64,
    /// Worst |error| at held-out temperatures outside it.
    pub outside_ppm: f64,
}

impl Worst {
    /// Takes `error_ppm` into the inside or outside worst case.
    pub fn update(&mut self, inside: bool, error_ppm: f64) {
        let slot = if inside {
            &mut self.inside_ppm
        } else {
            &mut self.outside_ppm
        };
        *slot = slot.max(error_ppm.abs());
    }
}

/// The comparison over a lot.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Comparison {
    /// Parts compared (those with a usable fit and polynomial).
    pub parts: usize,
    /// Parts skipped (fit not ok).
    pub skipped: usize,
    /// Calibrated span (coldest, hottest calibration temperature), C.
    pub calibrated_c: (f64, f64),
    /// Number of stored calibration coefficients per part: physics.
    pub physics_coefficients: usize,
    /// Number of stored calibration coefficients per part: polynomial.
    pub polynomial_coefficients: usize,
    /// Uncompensated (reference-temperature offset and gain only).
    pub raw: Worst,
    /// Physics calibration.
    pub physics: Worst,
    /// Usual polynomial.
    pub polynomial: Worst,
    /// Per held-out temperature (ascending): worst |error| of raw, physics
    /// and polynomial over the lot, ppm of span.
    pub by_temperature: Vec<[f64; 4]>,
    /// Whether any compared part was fitted to simulated data.
    pub simulated: bool,
    /// Caution ([`crate::station::output::caution_for`]).
    pub caution: String,
}

/// Compares on held-out rows `check` for the fitted `parts`.
pub fn compare(parts: &[PartFile], curves: &ShapeCurves, check: &ChamberData) -> Comparison {
    let groups = check.by_serial();
    let mut out = Comparison {
        parts: 0,
        skipped: 0,
        calibrated_c: (f64::INFINITY, f64::NEG_INFINITY),
        physics_coefficients: 8,
        polynomial_coefficients: 8,
        raw: Worst::default(),
        physics: Worst::default(),
        polynomial: Worst::default(),
        by_temperature: Vec::new(),
        simulated: parts.iter().any(|p| p.scenario.simulated),
        caution: String::new(),
    };
    out.caution = crate::station::output::caution_for(out.simulated);
    let mut by_t: std::collections::BTreeMap<u64, [f64; 4]> = std::collections::BTreeMap::new();
    for part in parts {
        let (Some(poly), Some(rows), true) = (
            part.polynomial,
            groups.get(part.serial.as_str()),
            part.is_ok(),
        ) else {
            out.skipped += 1;
            continue;
        };
        out.parts += 1;
        let lo = part
            .points
            .iter()
            .map(|p| p.chamber_c)
            .fold(f64::INFINITY, f64::min);
        let hi = part
            .points
            .iter()
            .map(|p| p.chamber_c)
            .fold(f64::NEG_INFINITY, f64::max);
        out.calibrated_c = (out.calibrated_c.0.min(lo), out.calibrated_c.1.max(hi));
        let model = ModelCompensation::for_part(part, curves);
        let phys = apply_rows(part, curves, &model, rows);
        let pol = apply_rows(part, curves, &PolyCompensation(poly), rows);
        for (a, b) in phys.iter().zip(&pol).filter(|(a, _)| !a.clipped) {
            let inside = a.chamber_c >= lo - 1e-9 && a.chamber_c <= hi + 1e-9;
            let upd = |w: &mut Worst, e: f64| w.update(inside, e);
            upd(&mut out.physics, a.error_ppm);
            upd(&mut out.polynomial, b.error_ppm);
            upd(&mut out.raw, a.raw_error_ppm);
            // Key by the ordered bits of the temperature (ascending for finite values).
            let key = (a.chamber_c + 1000.0).to_bits();
            let e = by_t.entry(key).or_insert([a.chamber_c, 0.0, 0.0, 0.0]);
            e[1] = e[1].max(a.raw_error_ppm.abs());
            e[2] = e[2].max(a.error_ppm.abs());
            e[3] = e[3].max(b.error_ppm.abs());
        }
    }
    out.by_temperature = by_t.into_values().collect();
    out
}

/// Calibration on a design against the polynomial at equal memory, on the
/// same held-out rows.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct QualifiedComparison {
    /// Parts compared (fit ok, with a polynomial).
    pub parts: usize,
    /// Parts skipped.
    pub skipped: usize,
    /// Stored numbers per part of the design fit.
    pub coefficients: usize,
    /// Stored numbers per part of the polynomial (with its nonlinearity terms).
    pub polynomial_coefficients: usize,
    /// Design fit.
    pub qualified: Worst,
    /// Polynomial at equal (or nearest lower) memory.
    pub polynomial: Worst,
    /// Per held-out temperature: `[t_c, design, polynomial]` worst |error|.
    pub by_temperature: Vec<[f64; 3]>,
    /// Whether any compared part was fitted to simulated data.
    pub simulated: bool,
    /// Caution ([`crate::station::output::caution_for`]).
    pub caution: String,
}

/// Compares parts fitted on a design with their stored polynomial.
pub fn compare_qualified(
    parts: &[PartFile],
    curves: &ShapeCurves,
    check: &ChamberData,
) -> QualifiedComparison {
    let groups = check.by_serial();
    let mut out = QualifiedComparison {
        parts: 0,
        skipped: 0,
        coefficients: 0,
        polynomial_coefficients: 0,
        // Same empty-result fields as `compare` above, for the qualified comparison.
        qualified: Worst::default(),
        polynomial: Worst::default(),
        by_temperature: Vec::new(),
        simulated: parts.iter().any(|p| p.scenario.simulated),
        caution: String::new(),
    };
    out.caution = crate::station::output::caution_for(out.simulated);
    let mut by_t: std::collections::BTreeMap<u64, [f64; 3]> = std::collections::BTreeMap::new();
    for part in parts {
        let (Some(poly), Some(rows), Some(d), true) = (
            part.polynomial,
            groups.get(part.serial.as_str()),
            part.design.as_ref(),
            part.is_ok(),
        ) else {
            out.skipped += 1;
            continue;
        };
        out.parts += 1;
        out.coefficients = d.fit.iter().map(|f| f.values.len()).sum();
        out.polynomial_coefficients = poly.coefficients();
        let (lo, hi) = part
            .points
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |m, p| {
                (m.0.min(p.chamber_c), m.1.max(p.chamber_c))
            });
        let model = ModelCompensation::for_part(part, curves);
        let q = apply_rows(part, curves, &model, rows);
        let pol = apply_rows(part, curves, &PolyCompensation(poly), rows);
        for (a, b) in q.iter().zip(&pol).filter(|(a, _)| !a.clipped) {
            let inside = a.chamber_c >= lo - 1e-9 && a.chamber_c <= hi + 1e-9;
            let upd = |w: &mut Worst, e: f64| w.update(inside, e);
            upd(&mut out.qualified, a.error_ppm);
            upd(&mut out.polynomial, b.error_ppm);
            let e = by_t
                .entry((a.chamber_c + 1000.0).to_bits())
                .or_insert([a.chamber_c, 0.0, 0.0]);
            e[1] = e[1].max(a.error_ppm.abs());
            e[2] = e[2].max(b.error_ppm.abs());
        }
    }
    out.by_temperature = by_t.into_values().collect();
    out
}
