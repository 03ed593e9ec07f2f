//! The compensators' short paths called on their own
//! (`update_temperature_short`, `compensate_sample_short`, as the C API
//! calls them): where one declines, nothing has changed, and the short
//! path followed by the general path where it declined gives exactly what
//! the full call gives, bit for bit, over the demo stream (its normal
//! samples and its faults) and over signals beyond the table, rail codes
//! and non-finite inputs.

use compensate::{Compensator, FixedCompensator, Status, TableView};

/// The demo images and stream the firmware embed.
static IMAGE_Q: &[u8] = include_bytes!("../../examples/firmware/data/well_level_q.bin");
static IMAGE_F32: &[u8] = include_bytes!("../../examples/firmware/data/well_level_f32.bin");
static STREAM: &str = include_str!("../../examples/firmware/data/well_level_stream.csv");

/// (raw, temp) codes: the demo stream, then extremes that leave the short
/// paths (codes far beyond the table and the rails, zero).
fn inputs() -> Vec<(i32, i32)> {
    let mut v: Vec<(i32, i32)> = STREAM
        .lines()
        .filter(|l| !l.starts_with('#') && !l.starts_with("raw_code") && !l.trim().is_empty())
        .map(|l| {
            let (r, t) = l.split_once(',').expect("two fields");
            (
                r.trim().parse().expect("raw"),
                t.trim().parse().expect("temp"),
            )
        })
        .collect();
    assert_eq!(v.len(), 120, "demo stream");
    let (raw, temp) = v[0];
    v.extend([
        (i32::MIN, temp),
        (i32::MAX, temp),
        (0, temp),
        (raw, i32::MIN),
        (raw, i32::MAX),
        (raw, 0),
        (raw, temp),
    ]);
    v
}

/// How often each short path applied and declined, so that the test
/// fails if the inputs stop covering both.
#[derive(Default)]
struct Taken {
    update: [usize; 2],
    sample: [usize; 2],
}

impl Taken {
    fn check(&self) {
        assert!(
            self.update.iter().all(|&n| n > 0) && self.sample.iter().all(|&n| n > 0),
            "short update applied/declined {:?}, short sample {:?}",
            self.update,
            self.sample
        );
    }
}

#[test]
fn f32_short_then_general_equals_the_full_call() {
    let view = TableView::parse(IMAGE_F32).expect("demo f32 image");
    let mut full = Compensator::new(&view).expect("f32 image");
    let mut split = full;
    let mut taken = Taken::default();
    let mut cases: Vec<(f32, f32)> = inputs()
        .into_iter()
        .map(|(r, t)| (r as f32, t as f32))
        .collect();
    cases.extend([
        (f32::NAN, 4.2e6),
        (2.0e6, f32::NAN),
        (2.0e6, f32::INFINITY),
        (2.0e6, 4.2e6),
    ]);
    for (i, &(raw, temp)) in cases.iter().enumerate() {
        let want_t = full.update_temperature(temp);
        let before = format!("{split:?}");
        let got_t = if split.update_temperature_short(temp) {
            taken.update[0] += 1;
            Status::OK
        } else {
            taken.update[1] += 1;
            assert_eq!(
                format!("{split:?}"),
                before,
                "input {i}: a declined update changed the state"
            );
            split.update_general(temp)
        };
        assert_eq!(got_t, want_t, "input {i}: update status");
        assert_eq!(
            format!("{split:?}"),
            format!("{full:?}"),
            "input {i}: state"
        );
        let want = full.compensate_sample(raw);
        let got = match split.compensate_sample_short(raw) {
            Some(r) => {
                taken.sample[0] += 1;
                r
            }
            None => {
                taken.sample[1] += 1;
                split.compensate_general(raw)
            }
        };
        assert_eq!(
            (got.value.to_bits(), got.status),
            (want.value.to_bits(), want.status),
            "input {i}: sample"
        );
    }
    taken.check();
}

// Same as the f32 test for the integer compensator: the two have one set of calls each.
#[test]
fn q_short_then_general_equals_the_full_call() {
    let view = TableView::parse_q(IMAGE_Q).expect("demo Q image");
    let mut full = FixedCompensator::new(&view).expect("Q image");
    let mut split = full;
    let mut taken = Taken::default();
    for (i, &(raw, temp)) in inputs().iter().enumerate() {
        let want_t = full.update_temperature(temp);
        let before = split;
        let got_t = if split.update_temperature_short(temp) {
            taken.update[0] += 1;
            Status::OK
        } else {
            taken.update[1] += 1;
            assert_eq!(
                split, before,
                "input {i}: a declined update changed the state"
            );
            split.update_general(temp)
        };
        assert_eq!(got_t, want_t, "input {i}: update status");
        assert_eq!(split, full, "input {i}: state");
        // Same short-then-general sample step as the f32 test above, in Q.
        let want = full.compensate_sample(raw);
        let got = match split.compensate_sample_short(raw) {
            Some(r) => {
                taken.sample[0] += 1;
                r
            }
            None => {
                taken.sample[1] += 1;
                split.compensate_general(raw)
            }
        };
        assert_eq!(
            (got.value, got.status),
            (want.value, want.status),
            "input {i}: sample"
        );
    }
    taken.check();
}
