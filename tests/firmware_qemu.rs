//! The bare-metal firmware in `examples/firmware/`, built for a Cortex-M4F
//! (QEMU `mps2-an386`) and a Cortex-M0 (QEMU `microbit`), runs the recorded
//! sample stream through the compensate crate and prints every result; this
//! test recomputes each line on the host through the same crate, from the
//! same table images and inputs, and requires the results to agree bit for
//! bit. It also links the `nopanic` firmware, whose panic handler calls an
//! undefined symbol: the link succeeds only if no panic path is left in the
//! compensation code after LTO.
//!
//! Missing QEMU, cross binutils or Rust targets make the test fail with a
//! message saying how to install them (scripts/install-prereqs.sh); it never
//! skips silently.

#[path = "common/qemu.rs"]
mod qemu;

use qemu::{TARGETS, require_tool, run_checked, run_qemu};
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::{Mutex, OnceLock};

/// Folder of the firmware package.
fn firmware_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/firmware")
}

/// A `cargo` command for the firmware package (see [`qemu::inner_cargo`]).
fn inner_cargo() -> Command {
    qemu::inner_cargo(&firmware_dir())
}

/// Serialises the inner builds of this test process and remembers which
/// targets are built.
fn build_lock() -> std::sync::MutexGuard<'static, Vec<String>> {
    static BUILT: OnceLock<Mutex<Vec<String>>> = OnceLock::new();
    BUILT
        .get_or_init(|| Mutex::new(Vec::new()))
        .lock()
        .unwrap_or_else(|e| e.into_inner())
}

/// Builds every firmware binary for both targets in release, in one cargo
/// invocation so the two targets compile in parallel (once per test
/// process), and returns the folder holding the ELF files of `target`.
fn build_firmware(target: &str) -> PathBuf {
    let mut built = build_lock();
    let dir = firmware_dir().join("target").join(target).join("release");
    if !built.is_empty() {
        return dir;
    }
    let installed = run_checked(
        Command::new("rustup")
            .args(["target", "list", "--installed"])
            .current_dir(firmware_dir()),
        "rustup target list --installed",
    );
    let installed = String::from_utf8_lossy(&installed.stdout);
    for t in TARGETS {
        assert!(
            installed.lines().any(|l| l.trim() == t),
            "Rust target {t} is not installed for the pinned toolchain: run scripts/install-prereqs.sh \
             (or `rustup target add {t}`)"
        );
    }
    let mut cmd = inner_cargo();
    cmd.args(["build", "--release", "--locked", "--bins"]);
    for t in TARGETS {
        cmd.args(["--target", t]);
    }
    run_checked(
        &mut cmd,
        "cargo build --release --bins (both targets) in examples/firmware",
    );
    built.extend(TARGETS.iter().map(|t| t.to_string()));
    dir
}

#[allow(dead_code)]
#[path = "../examples/make_firmware_image.rs"]
mod make_firmware_image;

// The firmware's own stream parser (plain `core` code), so host and
// firmware read the CSV identically; `fill` is only used by the benchmark.
#[path = "../examples/firmware/src/report.rs"]
mod report;
#[allow(dead_code)]
#[path = "../examples/firmware/src/stream.rs"]
mod stream;

use report::{FloatResult, PolyLine, SampleLine};

use compensate::{Compensator, FixedCompensator, TableView};

/// Mirrors `validate` in examples/firmware/src/bin/main.rs.
fn validate_line<'a>(
    name: &str,
    bytes: &'a [u8],
    lines: &mut Vec<String>,
) -> Option<TableView<'a>> {
    match TableView::parse(bytes) {
        Ok(view) => {
            // The line examples/firmware/src/bin/main.rs prints: the expected output.
            lines.push(format!(
                "image {name} ok bytes={} t_nodes={} sig_nodes={} channels={}",
                bytes.len(),
                view.temperature_nodes(),
                view.thermometer_nodes(),
                view.channel_count()
            ));
            Some(view)
        }
        Err(e) => {
            lines.push(format!("image {name} rejected: {e}"));
            None
        }
    }
}

/// Every line the firmware must print on `target`, computed on the host with
/// the same compensate crate, images and stream (the firmware's sequence of
/// calls, mirrored step by step).
fn expected_output(target: &str, data: &make_firmware_image::FirmwareData) -> Vec<String> {
    let fpu = target == "thumbv7em-none-eabihf";
    let mut lines = Vec::new();
    let mut ok = true;
    let view_q = validate_line("q", &data.q_image, &mut lines);
    ok &= view_q.is_some();
    let mut fixed = view_q
        .as_ref()
        .and_then(|v| FixedCompensator::new(v).ok())
        .unwrap_or(FixedCompensator::unconfigured());
    let mut float = Compensator::unconfigured();
    if fpu {
        let view = validate_line("f32", &data.f32_image, &mut lines);
        ok &= view.is_some();
        float = view
            .as_ref()
            .and_then(|v| Compensator::new(v).ok())
            .unwrap_or(Compensator::unconfigured());
    }
    // The corrupted copy: one bit flipped in the middle byte.
    let mut copy = data.q_image.clone();
    let at = copy.len() / 2;
    copy[at] ^= 0x10;
    let view = validate_line("corrupted", &copy, &mut lines);
    let mut refused = view
        .as_ref()
        .and_then(|v| FixedCompensator::new(v).ok())
        .unwrap_or(FixedCompensator::unconfigured());
    refused.update_temperature(4_194_304);
    let r = refused.compensate_sample(1_000_000);
    lines.push(format!(
        "refused sample value={} status={}",
        r.value,
        r.status.bits()
    ));

    let mut n = 0;
    for (i, s) in stream::samples(&data.stream_csv).enumerate() {
        let s = s.unwrap_or_else(|e| panic!("well_level_stream.csv line {}: bad sample", e.line));
        let tq = fixed.update_temperature(s.temp_code);
        let q = fixed.compensate_sample(s.raw_code);
        let float_result = fpu.then(|| {
            let tf = float.update_temperature(s.temp_code as f32);
            let f = float.compensate_sample(s.raw_code as f32);
            FloatResult::new(&float, f, tf)
        });
        let line = SampleLine::new(i, s, float_result, &fixed, q, tq);
        lines.push(line.to_string());
        // The polynomial baseline, through host_tools::station::poly_baseline
        // (the code its accuracy was measured with).
        let p = &data.poly;
        let line = PolyLine {
            index: i,
            f32_value: fpu.then(|| p.f32_form.reading(s.temp_code as f32, s.raw_code as f32)),
            q: p.q_form.reading_q(s.temp_code, s.raw_code),
        };
        lines.push(line.to_string());
        n += 1;
    }
    lines.push(format!("done samples={n} ok={ok}"));
    lines
}

/// Runs the `main` firmware on `target` and compares every line with the
/// host's computation.
///
/// Tolerance: none, on both paths. The integer path is pure i32/i64
/// arithmetic, defined identically on every target. The f32 path uses only
/// IEEE 754 single-precision add, subtract, multiply, divide and compare,
/// which are correctly rounded on the host (SSE) and on the Cortex-M4F FPU
/// (IEEE 754-2008 sec. 5.1 and 4.3: each operation delivers the correctly
/// rounded result of its exact value); Rust never contracts `a * b + c`
/// into a fused multiply-add, and the M4F runs with flush-to-zero off (the
/// FPSCR reset value), so both sides execute the same roundings.
fn firmware_matches_host(target: &str) {
    let data = make_firmware_image::build();
    let dir = build_firmware(target);
    let (success, stdout, stderr) = run_qemu(target, &dir.join("main"));
    let want = expected_output(target, &data);
    let got: Vec<&str> = stdout.lines().collect();
    for (k, w) in want.iter().enumerate() {
        let g = got.get(k).copied().unwrap_or("<missing>");
        assert_eq!(
            g,
            w,
            "{target}: firmware line {} differs from the host's computation\n got:      {g}\n expected: {w}",
            k + 1
        );
    }
    assert_eq!(
        got.len(),
        want.len(),
        "{target}: firmware printed {} lines, host expects {}:\n{stdout}",
        got.len(),
        want.len()
    );
    assert!(
        success,
        "{target}: firmware exited with failure\n{stdout}\n{stderr}"
    );
}

#[test]
fn firmware_data_files_are_up_to_date() {
    let data = make_firmware_image::build();
    let stale = make_firmware_image::stale_files(&make_firmware_image::data_dir(), &data);
    assert!(
        stale.is_empty(),
        "examples/firmware/data: {} differ from what examples/make_firmware_image.rs builds; \
         run `cargo run --example make_firmware_image`",
        stale.join(", ")
    );
}

#[test]
fn cortex_m4f_firmware_matches_host_bit_for_bit() {
    firmware_matches_host("thumbv7em-none-eabihf");
}

#[test]
fn cortex_m0_firmware_matches_host_bit_for_bit() {
    firmware_matches_host("thumbv6m-none-eabi");
}

/// Links `nopanic` (must succeed and run) on both targets, and the same
/// program with one deliberate panic (must fail to link with the sentinel
/// symbol), so the proof is shown to be able to fail.
#[test]
fn compensation_path_links_without_any_panic() {
    for target in TARGETS {
        let dir = build_firmware(target);
        let (success, stdout, stderr) = run_qemu(target, &dir.join("nopanic"));
        assert!(
            success,
            "{target}: nopanic firmware failed\n{stdout}\n{stderr}"
        );
    }
    // Same target dir (dependencies are reused); the feature gives the
    // firmware crate its own build, and a failed link uplifts no binary.
    let out = {
        let _guard = build_lock();
        inner_cargo()
            .args(["build", "--release", "--locked", "--bin", "nopanic"])
            .args([
                "--features",
                "nopanic-selftest",
                "--target",
                "thumbv6m-none-eabi",
            ])
            .output()
            .expect("start cargo")
    };
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        !out.status.success() && stderr.contains("semidrift_compensation_path_can_panic"),
        "the nopanic self-test (a deliberate panic) must fail to link naming the sentinel symbol; \
         status {}:\n{stderr}",
        out.status
    );
}

/// No heap: no firmware binary contains an allocator entry point. Without a
/// `#[global_allocator]` any use of `alloc` would already fail to link; this
/// reads the symbol tables to show it for the built files.
#[test]
fn firmware_links_no_allocator() {
    require_tool("arm-none-eabi-nm", "--version");
    for target in TARGETS {
        let dir = build_firmware(target);
        for bin in ["main", "bench", "nopanic", "flashuse"] {
            let out = run_checked(
                Command::new("arm-none-eabi-nm").arg(dir.join(bin)),
                &format!("arm-none-eabi-nm {target}/{bin}"),
            );
            let symbols = String::from_utf8_lossy(&out.stdout);
            assert!(
                symbols.lines().any(|l| l.ends_with(" main")),
                "{target}/{bin}: symbol table has no `main`; nm output is not what this check expects"
            );
            for alloc in [
                "__rust_alloc",
                "__rdl_alloc",
                "__rg_alloc",
                "__rust_alloc_error_handler",
            ] {
                assert!(
                    !symbols.lines().any(|l| l.ends_with(alloc)),
                    "{target}/{bin} links the allocator symbol {alloc}"
                );
            }
        }
    }
}

/// The demo data mean something: on the temperature ramp, both paths'
/// readings (bit-identical to the firmware's, see above) recover the
/// pressure the simulated part was driven with.
///
/// Tolerance 450 ppm of full scale, the sum of: the image's verified error
/// against the part's fitted model plus the budget's fit-residual and
/// temperature-signal terms, within the 100 ppm budget the images are built
/// to (`semidrift verify` passes on both); the fitted model's own error
/// against the simulated truth at temperatures between the chamber points,
/// at most 323 ppm on a 50-part qualification lot of this scenario (the
/// demo's `model_error_ppm`, README); ADC noise of the output, 80 nV rms =
/// 2.4 ppm of the 33 mV span, 4 sigma 10 ppm: 433 ppm, rounded up.
#[test]
fn readings_recover_the_demo_pressure() {
    const TOLERANCE_PPM_FS: f64 = 450.0;
    let data = make_firmware_image::build();
    let view = TableView::parse(&data.f32_image).expect("f32 demo image parses");
    let mut c = Compensator::new(&view).expect("f32 image");
    let view_q = TableView::parse(&data.q_image).expect("Q demo image parses");
    let mut cq = FixedCompensator::new(&view_q).expect("Q image");
    let out_scale = 2f64.powi(-i32::from(view_q.q_format().output));
    let mut worst = (0.0f64, 0usize);
    for (i, s) in stream::samples(&data.stream_csv)
        .enumerate()
        .take(make_firmware_image::STREAM_LEN - 4)
    {
        let s = s.expect("stream parses");
        let (bar, t_c) = make_firmware_image::ramp_truth(i);
        c.update_temperature(s.temp_code as f32);
        let r = c.compensate_sample(s.raw_code as f32);
        cq.update_temperature(s.temp_code);
        let rq = f64::from(cq.compensate_sample(s.raw_code).value) * out_scale;
        for (path, got) in [("f32", f64::from(r.value)), ("q", rq)] {
            let err_ppm = (got - bar).abs() / make_firmware_image::FULL_SCALE_BAR * 1.0e6;
            assert!(
                err_ppm <= TOLERANCE_PPM_FS,
                "{path} sample {i} (raw {}, temp code {}, {t_c:.2} C): got {got} bar, \
                 expected {bar:.4} bar, error {err_ppm:.1} ppm FS > {TOLERANCE_PPM_FS}",
                s.raw_code,
                s.temp_code,
            );
            if err_ppm > worst.0 {
                worst = (err_ppm, i);
            }
        }
    }
    // The check stays sensitive: a tolerance more than ten times the worst
    // error seen would let a regression of that order through unnoticed.
    assert!(
        worst.0 * 10.0 > TOLERANCE_PPM_FS,
        "tolerance check is vacuous: worst {:.1} ppm",
        worst.0
    );
    println!("worst error {:.1} ppm FS at sample {}", worst.0, worst.1);
}

/// The benchmark's extra temperature streams are what their metric names
/// say, on the committed images: the simulated stream's first
/// `stream::RAMP` temperatures rise; the drift (`temp_update_drift_insn`)
/// changes node interval at most twice per pass (crossing one node up and
/// down), and the jumps (`temp_update_jump_insn`) change interval at every
/// update, the wrap-around included.
#[test]
fn bench_streams_drift_and_jump_as_named() {
    const N: usize = 116; // the benchmark's INPUTS
    let csv = include_str!("../examples/firmware/data/well_level_stream.csv");
    let temps: Vec<i32> = stream::samples(csv)
        .map(|s| s.expect("committed stream parses").temp_code)
        .collect();
    assert_eq!(
        temps.len(),
        N + 4,
        "simulated samples (the last four are faults)"
    );
    let ramp = &temps[..stream::RAMP];
    assert!(ramp.windows(2).all(|w| w[0] < w[1]), "ramp not rising");
    let drift: [i32; N] = stream::drift(temps[stream::DRIFT_FROM], temps[stream::DRIFT_FROM + 1]);
    let jumps: [i32; N] = stream::jumps(ramp);
    // Node-interval changes from each update to the next, wrap included.
    let changes = |index: &dyn Fn(i32) -> usize, s: &[i32; N]| {
        (0..N)
            .filter(|&k| index(s[k]) != index(s[(k + 1) % N]))
            .count()
    };
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples/firmware/data");
    for name in ["well_level_f32.bin", "well_level_f32_fine.bin"] {
        let bytes = std::fs::read(dir.join(name)).expect("committed image");
        let view = TableView::parse(&bytes).expect("committed image parses");
        let axis = view.tables_f32().expect("f32 tables").temperature;
        let index = |c: i32| axis.locate(c as f32).index;
        assert!(
            changes(&index, &drift) <= 2,
            "{name}: drift changes interval"
        );
        assert_eq!(changes(&index, &jumps), N, "{name}: a jump stays");
    }
    let bytes = std::fs::read(dir.join("well_level_q.bin")).expect("committed image");
    let view = TableView::parse(&bytes).expect("committed image parses");
    let axis = view.tables_q().expect("Q tables").temperature;
    let index = |c: i32| axis.locate(c).index;
    assert!(changes(&index, &drift) <= 2, "Q: drift changes interval");
    assert_eq!(changes(&index, &jumps), N, "Q: a jump stays");
}
