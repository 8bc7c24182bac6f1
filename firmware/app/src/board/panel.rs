//! The operator panel and steering output stand-ins shared by the emulated
//! boards: they have no PWM and no switches the host can drive, so the
//! steering PWM is a register the status reports and the engage switch
//! and override sensor are cells the host sets (panel bytes on the MPS2
//! board's UART1, the link's cycle frame in link mode).

use core::cell::Cell;
use core::convert::Infallible;

use critical_section::Mutex;
use embedded_hal::digital::{ErrorType as PinErrorType, InputPin};
use embedded_hal::pwm::{ErrorType as PwmErrorType, SetDutyCycle};

/// A steering PWM stand-in: keeps the duty for the status line.
pub struct ReportedPwm {
    duty: u16,
}

impl ReportedPwm {
    /// Full scale, counts.
    pub const MAX: u16 = 10_000;

    /// At zero duty.
    pub const fn new() -> Self {
        Self { duty: 0 }
    }

    /// The duty last set, counts.
    pub fn duty(&self) -> u16 {
        self.duty
    }
}

impl Default for ReportedPwm {
    fn default() -> Self {
        Self::new()
    }
}

impl PwmErrorType for ReportedPwm {
    type Error = Infallible;
}

impl SetDutyCycle for ReportedPwm {
    fn max_duty_cycle(&self) -> u16 {
        Self::MAX
    }

    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Self::Error> {
        self.duty = duty;
        Ok(())
    }
}

/// A panel input: a switch or sensor whose state comes in as panel bytes.
pub struct PanelPin<'a> {
    state: &'a Mutex<Cell<bool>>,
}

impl<'a> PanelPin<'a> {
    /// The pin reading `state`.
    pub const fn new(state: &'a Mutex<Cell<bool>>) -> Self {
        Self { state }
    }
}

impl PinErrorType for PanelPin<'_> {
    type Error = Infallible;
}

impl InputPin for PanelPin<'_> {
    fn is_high(&mut self) -> Result<bool, Self::Error> {
        Ok(critical_section::with(|cs| self.state.borrow(cs).get()))
    }

    fn is_low(&mut self) -> Result<bool, Self::Error> {
        self.is_high().map(|h| !h)
    }
}

/// The engage switch.
pub static ENGAGE: Mutex<Cell<bool>> = Mutex::new(Cell::new(false));
/// The manual-override sensor.
pub static OVERRIDE: Mutex<Cell<bool>> = Mutex::new(Cell::new(false));
