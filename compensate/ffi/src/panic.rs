//! The panic handler of the bare-metal static library.
//!
//! It calls a symbol that nothing defines, so a C program linked against
//! the library (with `--gc-sections`, as `examples/firmware-c/build.sh`
//! links) fails to link if any panic path is reachable from the entry
//! points it calls: the link itself proves that none is (the same proof as
//! the Rust firmware's `nopanic` binary). The handler is never entered.

unsafe extern "C" {
    /// Defined nowhere: referencing it fails the link.
    fn semidrift_ffi_panic_is_reachable() -> !;
}

#[panic_handler]
fn panic(_info: &core::panic::PanicInfo) -> ! {
    // SAFETY: never runs; the link fails first (see the module docs).
    unsafe { semidrift_ffi_panic_is_reachable() }
}
