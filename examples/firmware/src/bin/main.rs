#![no_std]
#![no_main]
use cortex_m_rt::entry;
use cortex_m_semihosting::hprintln;
semidrift_firmware::printing_fault_handlers!();
#[entry]
fn main() -> ! {
    let p = cortex_m::Peripherals::take().unwrap();
    let c = semidrift_firmware::count::Counter::new(p.SYST);
    hprintln!("insn/tick x100 = {}", c.insn_per_tick_centi());
    hprintln!(
        "stack so far = {}",
        semidrift_firmware::stack::program_high_water_bytes()
    );
    let mut st = 0u32;
    let f: fn(&mut u32, u32) -> u32 = |s, a| {
        let mut b = [0u32; 16];
        for x in b.iter_mut() {
            *x = core::hint::black_box(a + *s);
        }
        b[3]
    };
    hprintln!(
        "call stack = {}",
        semidrift_firmware::stack::measure_call_bytes(&mut st, 3, f)
    );
    semidrift_firmware::rt::exit_success()
}
