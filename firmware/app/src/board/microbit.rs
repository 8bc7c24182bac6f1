//! The emulated micro:bit (nRF51822, Cortex-M0, QEMU `microbit`), for the
//! link mode only: its UART carries the link frames, polled; no interrupt
//! runs. The Cortex-M0 build runs here on an M0 core, so what an M0 traps
//! and an M3 does not (an unaligned access, an ARMv7-M instruction) shows.
//!
//! The UART is the nRF51's (nRF51 Series Reference Manual, UART chapter):
//! tasks to start the receiver and the transmitter, a ready event per
//! byte each way, the byte registers `RXD` and `TXD`. QEMU's first
//! `-serial` is this UART.

use core::convert::Infallible;

pub use super::panel::{PanelPin, ReportedPwm, ENGAGE, OVERRIDE};
pub use super::stack::{paint_stack, stack_used, statics_size};

/// The nRF51 UART0.
pub const UART0: usize = 0x4000_2000;

const TASKS_STARTRX: usize = 0x000;
const TASKS_STARTTX: usize = 0x008;
const EVENTS_RXDRDY: usize = 0x108;
const EVENTS_TXDRDY: usize = 0x11C;
const ENABLE: usize = 0x500;
const PSELTXD: usize = 0x50C;
const PSELRXD: usize = 0x514;
const RXD: usize = 0x518;
const TXD: usize = 0x51C;
const BAUDRATE: usize = 0x524;
/// `ENABLE` value that turns the UART on.
const ENABLED: u32 = 4;
/// `BAUDRATE` for 115200 baud.
const BAUD_115200: u32 = 0x01D7_E000;
/// The micro:bit's USB serial pins: P0.24 transmits, P0.25 receives.
const PIN_TX: u32 = 24;
const PIN_RX: u32 = 25;

/// The nRF51 UART, polled.
pub struct Uart {
    base: usize,
}

impl Uart {
    /// The UART at `base`, on and started both ways. No interrupt is
    /// enabled whatever `_rx_interrupt` says: this board runs the link
    /// mode only, which polls (the argument keeps the MPS2 board's call).
    ///
    /// # Safety
    /// `base` must be an nRF51 UART this code alone uses.
    pub unsafe fn new(base: usize, _rx_interrupt: bool) -> Self {
        let u = Self { base };
        u.write(PSELTXD, PIN_TX);
        u.write(PSELRXD, PIN_RX);
        u.write(BAUDRATE, BAUD_115200);
        u.write(ENABLE, ENABLED);
        u.write(TASKS_STARTRX, 1);
        u.write(TASKS_STARTTX, 1);
        u
    }

    fn read(&self, reg: usize) -> u32 {
        // SAFETY: a register of the UART this value owns.
        unsafe { core::ptr::read_volatile((self.base + reg) as *const u32) }
    }

    fn write(&self, reg: usize, v: u32) {
        // SAFETY: a register of the UART this value owns.
        unsafe { core::ptr::write_volatile((self.base + reg) as *mut u32, v) }
    }

    /// The next received byte, if one is waiting.
    pub fn try_read(&mut self) -> Option<u8> {
        if self.read(EVENTS_RXDRDY) == 0 {
            return None;
        }
        // The event is cleared before RXD is read, so that a byte arriving
        // meanwhile raises it again (the manual's order).
        self.write(EVENTS_RXDRDY, 0);
        Some((self.read(RXD) & 0xFF) as u8)
    }
}

impl embedded_io::ErrorType for Uart {
    type Error = Infallible;
}

impl embedded_io::Write for Uart {
    fn write(&mut self, buf: &[u8]) -> Result<usize, Self::Error> {
        for &b in buf {
            Uart::write(self, EVENTS_TXDRDY, 0);
            Uart::write(self, TXD, u32::from(b));
            while self.read(EVENTS_TXDRDY) == 0 {}
        }
        Ok(buf.len())
    }

    fn flush(&mut self) -> Result<(), Self::Error> {
        Ok(())
    }
}

/// No device interrupt is used: one vector for the linker, never enabled.
#[link_section = ".vector_table.interrupts"]
#[no_mangle]
pub static __INTERRUPTS: [unsafe extern "C" fn(); 1] = [unused_interrupt];

unsafe extern "C" fn unused_interrupt() {
    loop {
        cortex_m::asm::wfi();
    }
}
