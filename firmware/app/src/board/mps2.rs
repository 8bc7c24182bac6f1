//! The emulated MPS2 AN386 board (Cortex-M4F, QEMU `mps2-an386`): CMSDK
//! UART0 for the receiver (receive interrupt, IRQ 0), CMSDK UART1 for the
//! operator panel and the status output, SysTick for the control cycle.
//!
//! The board has no PWM and no switches that the host can drive, so the
//! steering PWM is a register that the status line reports, and the
//! engage switch and the override sensor are set by panel bytes on UART1
//! (`E` engage, `S` standby, `O` override on, `o` off). On a real board
//! these are a timer's PWM channel and two GPIO inputs.

use core::cell::Cell;
use core::convert::Infallible;

use critical_section::Mutex;
use kappaline::Micros;

pub use super::panel::{PanelPin, ReportedPwm, ENGAGE, OVERRIDE};
pub use super::stack::{paint_stack, stack_used, statics_size};

/// Core clock, Hz (the MPS2 FPGA images run at 25 MHz).
pub const CORE_HZ: u32 = 25_000_000;

/// A CMSDK APB UART.
pub struct Uart {
    base: usize,
}

const DATA: usize = 0x00;
const STATE: usize = 0x04;
const CTRL: usize = 0x08;
const INTCLEAR: usize = 0x0C;
const BAUDDIV: usize = 0x10;
const TX_FULL: u32 = 1;
const RX_FULL: u32 = 2;

/// UART0 (receiver).
pub const UART0: usize = 0x4000_4000;
/// UART1 (operator panel and status).
pub const UART1: usize = 0x4000_5000;

impl Uart {
    /// The UART at `base`, enabled for transmit and receive; `rx_interrupt`
    /// enables its receive interrupt.
    ///
    /// # Safety
    /// `base` must be a CMSDK UART this code alone uses.
    pub unsafe fn new(base: usize, rx_interrupt: bool) -> Self {
        let u = Self { base };
        u.write(BAUDDIV, 16);
        u.write(CTRL, 0b11 | if rx_interrupt { 0b1000 } else { 0 });
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
        if self.read(STATE) & RX_FULL != 0 {
            Some((self.read(DATA) & 0xFF) as u8)
        } else {
            None
        }
    }

    /// Clears the receive interrupt.
    pub fn clear_rx_interrupt(&mut self) {
        self.write(INTCLEAR, 0b10);
    }
}

impl embedded_io::ErrorType for Uart {
    type Error = Infallible;
}

impl embedded_io::Write for Uart {
    fn write(&mut self, buf: &[u8]) -> Result<usize, Self::Error> {
        for &b in buf {
            while self.read(STATE) & TX_FULL != 0 {}
            Uart::write(self, DATA, u32::from(b));
        }
        Ok(buf.len())
    }

    fn flush(&mut self) -> Result<(), Self::Error> {
        Ok(())
    }
}

/// Control periods elapsed (written by the SysTick handler only).
static PERIODS: Mutex<Cell<u32>> = Mutex::new(Cell::new(0));

/// The control clock: SysTick interrupting every `period_us`.
pub struct Clock {
    period_us: u32,
}

impl Clock {
    /// Starts SysTick at `period_us` (at most 0.67 s at 25 MHz).
    pub fn start(mut syst: cortex_m::peripheral::SYST, period_us: u32) -> Self {
        use cortex_m::peripheral::syst::SystClkSource;
        syst.set_clock_source(SystClkSource::Core);
        syst.set_reload(CORE_HZ / 1_000_000 * period_us - 1);
        syst.clear_current();
        syst.enable_interrupt();
        syst.enable_counter();
        // SysTick keeps running once `syst` is dropped; `now` reads it
        // through the static register accessors.
        Self { period_us }
    }

    /// Counts one period (call from the SysTick handler).
    pub fn tick(&self) {
        critical_section::with(|cs| {
            let p = PERIODS.borrow(cs);
            p.set(p.get().wrapping_add(1));
        });
    }

    /// Now, microseconds since start (wrapping): periods elapsed plus the
    /// part of the current one.
    pub fn now(&self) -> Micros {
        critical_section::with(|cs| {
            let periods = PERIODS.borrow(cs).get();
            let reload = cortex_m::peripheral::SYST::get_reload();
            let current = cortex_m::peripheral::SYST::get_current();
            // A wrap not yet counted (its interrupt pending): one more period.
            let pending = cortex_m::peripheral::SCB::is_pendst_pending();
            let periods = periods.wrapping_add(u32::from(pending));
            let into = (reload - current.min(reload)) / (CORE_HZ / 1_000_000);
            Micros(periods.wrapping_mul(self.period_us).wrapping_add(into))
        })
    }
}

/// Applies the panel bytes waiting on `panel`.
pub fn read_panel(panel: &mut Uart) {
    while let Some(b) = panel.try_read() {
        critical_section::with(|cs| match b {
            b'E' => ENGAGE.borrow(cs).set(true),
            b'S' => ENGAGE.borrow(cs).set(false),
            b'O' => OVERRIDE.borrow(cs).set(true),
            b'o' => OVERRIDE.borrow(cs).set(false),
            _ => {}
        });
    }
}

/// The interrupt line of UART0's receiver.
#[derive(Clone, Copy)]
pub struct Uart0Rx;

// SAFETY: IRQ 0 is UART0 RX on the MPS2 AN385/AN386 images.
unsafe impl cortex_m::interrupt::InterruptNumber for Uart0Rx {
    fn number(self) -> u16 {
        0
    }
}

/// The device interrupt vectors: only UART0 RX is used.
#[link_section = ".vector_table.interrupts"]
#[no_mangle]
pub static __INTERRUPTS: [unsafe extern "C" fn(); 1] = [crate::UART0RX];
