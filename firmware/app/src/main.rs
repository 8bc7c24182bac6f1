//! A firmware application template for kappaline.
//!
//! * Receive interrupt (UART0): each byte from the positioning receiver
//!   goes into the NMEA reader; complete epochs become fixes
//!   ([`receiver`]).
//! * Timer interrupt (SysTick, 20 Hz): the control cycle ([`app`]):
//!   operator inputs, `Guidance::step`, steering output, status line on
//!   UART1.
//! * Main: sets the board up and sleeps.
//!
//! Porting: rewrite [`board`] (UARTs, timer, PWM, inputs, vectors) for the
//! board; [`app`] and [`receiver`] are generic over embedded-hal and
//! embedded-io. The demo path, frame and vehicle below are an invented
//! field and machine.
//!
//! Caution: not a certified safety function; keep an independent
//! emergency stop (see the README).

#![no_std]
#![no_main]

pub mod app;
pub mod board;
#[cfg(feature = "link")]
pub mod link;
pub mod receiver;

#[cfg(not(feature = "board-microbit"))]
use core::cell::RefCell;

use cortex_m_rt::{entry, exception, ExceptionFrame};
use cortex_m_semihosting::debug;
#[cfg(not(feature = "board-microbit"))]
use critical_section::Mutex;
use kappaline::io::actuator::SteeringOutput;
use kappaline::io::nmea::{EpochConfig, HeadingSource};
use kappaline::{Geodetic, LeverArm, LocalFrame, Path, Vehicle};
#[cfg(not(feature = "board-microbit"))]
use kappaline::{PathBuilder, Pose, Segment};

#[cfg(not(feature = "board-microbit"))]
use app::write_status;
use app::{App, PATH_SEGMENTS};
use board::active::{self as hw, PanelPin, ReportedPwm, Uart};
#[cfg(not(feature = "board-microbit"))]
use board::mps2::Clock;
use receiver::Receiver;

/// Control period: 50 ms (20 Hz).
const PERIOD_US: u32 = 50_000;

/// Cycles before the demo ends (exit code 0): 40 s.
#[cfg(not(feature = "board-microbit"))]
const DEMO_CYCLES: u32 = 800;

#[cfg(not(feature = "board-microbit"))]
/// The receiver state, shared by the receive interrupt and the cycle.
static RECEIVER: Mutex<RefCell<Option<Receiver>>> = Mutex::new(RefCell::new(None));
#[cfg(not(feature = "board-microbit"))]
/// The clock, set once in `main`.
static CLOCK: Mutex<RefCell<Option<Clock>>> = Mutex::new(RefCell::new(None));

/// The frame of the invented field (its south-west corner).
fn frame() -> Option<LocalFrame> {
    LocalFrame::new(Geodetic::from_degrees(47.25, 8.5, 450.0).ok()?).ok()
}

/// The field's first pass and turn: 60 m east, a clothoid into a left
/// turn of 15 m radius, a quarter turn, out again.
#[cfg(not(feature = "board-microbit"))]
fn demo_path() -> Option<Path<f32, PATH_SEGMENTS>> {
    let k = 1.0 / 15.0;
    PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .ok()?
        .push(Segment::line(60.0).ok()?)
        .ok()?
        .push(Segment::transition(6.0, 0.0, k).ok()?)
        .ok()?
        .push(Segment::arc(17.6, k).ok()?)
        .ok()?
        .push(Segment::transition(6.0, k, 0.0).ok()?)
        .ok()?
        .push(Segment::line(40.0).ok()?)
        .ok()?
        .build()
        .ok()
}

#[entry]
fn main() -> ! {
    hw::paint_stack();
    let Some(core) = cortex_m::Peripherals::take() else {
        fail()
    };
    let (Some(frame), Ok(arm)) = (frame(), LeverArm::new(1.0f32, 0.0, 2.0)) else {
        fail()
    };
    let config = EpochConfig {
        frame,
        arm,
        heading: HeadingSource::TrueHeading,
        latency_us: 20_000,
        expect_gst: true,
    };
    #[cfg(feature = "link")]
    {
        link::start_counter(core.SYST);
        // SAFETY: UART0 is used by the link device alone, from here on
        // (its receive interrupt stays masked in link mode).
        let uart = unsafe { Uart::new(hw::UART0, false) };
        link::Device::new(uart, Receiver::new(config), PERIOD_US, build_link_app).run()
    }
    #[cfg(not(feature = "link"))]
    run_on_timer(core, config)
}

/// The interrupt-driven build: receiver bytes in UART0's interrupt, the
/// control cycle on SysTick.
#[cfg(not(feature = "link"))]
fn run_on_timer(core: cortex_m::Peripherals, config: EpochConfig<f32>) -> ! {
    critical_section::with(|cs| RECEIVER.borrow_ref_mut(cs).replace(Receiver::new(config)));
    // SAFETY: UART0 is used by the receive interrupt alone, from here on.
    let _rx = unsafe { Uart::new(hw::UART0, true) };
    let clock = Clock::start(core.SYST, PERIOD_US);
    critical_section::with(|cs| CLOCK.borrow_ref_mut(cs).replace(clock));
    // SAFETY: the handler is defined below and needs no set-up beyond this.
    unsafe { cortex_m::peripheral::NVIC::unmask(hw::Uart0Rx) };
    loop {
        cortex_m::asm::wfi();
    }
}

#[cfg(not(feature = "board-microbit"))]
fn now() -> kappaline::Micros {
    critical_section::with(|cs| {
        CLOCK
            .borrow_ref(cs)
            .as_ref()
            .map_or(kappaline::Micros(0), Clock::now)
    })
}

#[cfg(not(feature = "board-microbit"))]
/// The receive interrupt of UART0: bytes into the receiver.
#[no_mangle]
pub extern "C" fn UART0RX() {
    // SAFETY: only this handler touches UART0 after `main` set it up.
    let mut uart = unsafe { Uart::new(hw::UART0, true) };
    uart.clear_rx_interrupt();
    while let Some(b) = uart.try_read() {
        let t = now();
        critical_section::with(|cs| {
            if let Some(r) = RECEIVER.borrow_ref_mut(cs).as_mut() {
                r.on_byte(b, t);
            }
        });
    }
}

/// The controller of this firmware.
type DemoApp = App<ReportedPwm, PanelPin<'static>, PanelPin<'static>>;

/// The demo machine's controller on `path`.
fn app_on(path: Path<f32, PATH_SEGMENTS>) -> Option<DemoApp> {
    // The machine of hil/scenarios/lockstep.toml, figure for figure.
    let vehicle = Vehicle::front_steered(2.6f32, 0.6, 0.6)
        .and_then(|v| v.with_control_point(0.0))
        .and_then(|v| v.with_steer_lag(0.1))
        .and_then(|v| v.with_max_speed(5.0))
        .and_then(|v| v.with_max_lateral_acceleration(1.5))
        .and_then(|v| v.with_max_deceleration(1.0))
        .ok()?;
    let steering = SteeringOutput::new(ReportedPwm::new(), app::demo_calibration().ok()?);
    let pins = (PanelPin::new(&hw::ENGAGE), PanelPin::new(&hw::OVERRIDE));
    App::new(vehicle, path, steering, pins, PERIOD_US).ok()
}

#[cfg(not(feature = "board-microbit"))]
fn build_app() -> Option<DemoApp> {
    app_on(demo_path()?)
}

#[cfg(feature = "link")]
fn build_link_app(path: Path<f32, PATH_SEGMENTS>) -> Option<DemoApp> {
    app_on(path)
}

#[cfg(not(feature = "board-microbit"))]
/// The control cycle, at every SysTick.
#[exception]
fn SysTick() {
    static mut APP: Option<DemoApp> = None;
    static mut PANEL: Option<Uart> = None;
    critical_section::with(|cs| {
        if let Some(c) = CLOCK.borrow_ref(cs).as_ref() {
            c.tick();
        }
    });
    let t = now();
    if APP.is_none() {
        *APP = build_app();
    }
    let panel = PANEL.get_or_insert_with(|| {
        // SAFETY: UART1 is used by this handler alone.
        unsafe { Uart::new(hw::UART1, false) }
    });
    let Some(app) = APP.as_mut() else { fail() };
    hw::read_panel(panel);
    let fix = critical_section::with(|cs| {
        RECEIVER
            .borrow_ref_mut(cs)
            .as_mut()
            .map_or(kappaline::FixUpdate::NoFix, Receiver::take)
    });
    let report = app.cycle(t, fix);
    let _ = write_status(panel, &report);
    if report.cycle >= DEMO_CYCLES {
        // The RAM figures for the README: statics and the stack's mark.
        let _ = embedded_io::Write::write_fmt(
            panel,
            format_args!(
                "M statics {} stack {}\n",
                hw::statics_size(),
                hw::stack_used()
            ),
        );
        debug::exit(debug::EXIT_SUCCESS);
    }
}

fn fail() -> ! {
    debug::exit(debug::EXIT_FAILURE);
    loop {
        cortex_m::asm::wfi();
    }
}

#[exception]
unsafe fn HardFault(_frame: &ExceptionFrame) -> ! {
    fail()
}

#[panic_handler]
fn panic(_info: &core::panic::PanicInfo) -> ! {
    fail()
}
