//! Output and stack helpers of the `full_scan` harness (semihosting lines
//! in the harness's format, and the painted-stack high-water mark).

use core::fmt::Write as _;

use cortex_m_semihosting::hio;
use heapless::String;

/// Semihosting stdout, one line at a time.
pub struct Host(Option<hio::HostStream>);

impl Host {
    /// Opens semihosting stdout (silently nothing without a host).
    pub fn open() -> Self {
        Host(hio::hstdout().ok())
    }

    /// Writes one formatted line.
    pub fn line(&mut self, args: core::fmt::Arguments) {
        let mut s: String<160> = String::new();
        let _ = s.write_fmt(args);
        let _ = s.push('\n');
        if let Some(out) = self.0.as_mut() {
            let _ = out.write_all(s.as_bytes());
        }
    }
}

/// Stack bytes used by `f`: paints the free stack below the current stack
/// pointer, runs `f`, and finds the lowest word that changed.
#[inline(never)]
pub fn stack_used(f: impl FnOnce()) -> usize {
    const PAINT: u32 = 0xC0FF_EE55;
    extern "C" {
        static mut __ebss: u32;
    }
    let sp: usize;
    // SAFETY: reads the stack pointer only.
    unsafe { core::arch::asm!("mov {}, sp", out(reg) sp) };
    let floor = core::ptr::addr_of!(__ebss) as usize + 64;
    let bottom = (sp.saturating_sub(12 * 1024)).max(floor) & !3;
    let top = sp & !3;
    let mut a = bottom;
    while a < top {
        // SAFETY: [bottom, sp) is free stack between the end of .bss and the
        // stack pointer; no interrupts are enabled in the harness.
        unsafe { core::ptr::write_volatile(a as *mut u32, PAINT) };
        a += 4;
    }
    f();
    let mut a = bottom;
    // SAFETY: as above, reading back the painted words.
    while a < top && unsafe { core::ptr::read_volatile(a as *const u32) } == PAINT {
        a += 4;
    }
    if a == bottom {
        usize::MAX // overflowed the painted area: not measurable
    } else {
        top - a
    }
}
