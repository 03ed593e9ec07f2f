//! Exit through semihosting, and handlers that turn every fault and panic
//! into a failing exit so that QEMU never hangs.

use cortex_m_semihosting::debug;

/// Ends the emulation with exit status 0.
pub fn exit_success() -> ! {
    debug::exit(debug::EXIT_SUCCESS);
    // Only reached on a debugger without semihosting exit support.
    loop {
        cortex_m::asm::bkpt();
    }
}

/// Ends the emulation with exit status 1.
pub fn exit_failure() -> ! {
    debug::exit(debug::EXIT_FAILURE);
    loop {
        cortex_m::asm::bkpt();
    }
}

/// Defines a panic handler that prints the panic message and exits with
/// failure, plus HardFault and default handlers that print and exit with
/// failure. Invoke once in every binary that prints (not in `nopanic`).
#[macro_export]
macro_rules! printing_fault_handlers {
    () => {
        #[panic_handler]
        fn panic(info: &core::panic::PanicInfo) -> ! {
            cortex_m_semihosting::hprintln!("error: firmware panicked: {}", info);
            $crate::rt::exit_failure()
        }

        #[cortex_m_rt::exception]
        unsafe fn HardFault(frame: &cortex_m_rt::ExceptionFrame) -> ! {
            cortex_m_semihosting::hprintln!("error: HardFault at pc={:#010x}", frame.pc());
            $crate::rt::exit_failure()
        }

        #[cortex_m_rt::exception]
        unsafe fn DefaultHandler(irqn: i16) {
            cortex_m_semihosting::hprintln!("error: unexpected exception/interrupt {}", irqn);
            $crate::rt::exit_failure()
        }
    };
}
