//! The byte stream to the device, every wait bounded.

use std::io::{self, Read, Write};
use std::net::{Ipv4Addr, SocketAddr, TcpListener, TcpStream};
use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

/// A byte stream to a device: writes, and reads that give up at a
/// deadline.
pub trait Transport {
    /// Writes all of `bytes`.
    ///
    /// # Errors
    /// The stream's.
    fn send(&mut self, bytes: &[u8]) -> io::Result<()>;
    /// Reads what is there into `buf`, waiting at most until `deadline`;
    /// `Ok(0)` when the deadline passed with nothing read.
    ///
    /// # Errors
    /// The stream's; a closed stream is `UnexpectedEof`.
    fn recv(&mut self, buf: &mut [u8], deadline: Instant) -> io::Result<usize>;
}

/// The emulated boards, by core.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Board {
    /// Cortex-M4F, QEMU `mps2-an386`.
    M4f,
    /// Cortex-M3, QEMU `mps2-an385`.
    M3,
    /// The Cortex-M0 build (`thumbv6m-none-eabi`) on QEMU `mps2-an385`,
    /// whose core is a Cortex-M3: QEMU 7.2 has no MPS2 board with an M0
    /// (`-cpu cortex-m0` is refused there). ARMv6-M is a subset of
    /// ARMv7-M, so the code and the instruction counts are the M0 build's;
    /// what an M0 would trap and an M3 does not (an unaligned access) goes
    /// unseen: [`Board::Microbit`] runs it on an M0 core.
    M0,
    /// The Cortex-M0 build for the micro:bit (nRF51822, a Cortex-M0 core,
    /// QEMU `microbit`; `firmware/app` with `--features
    /// link,board-microbit`).
    Microbit,
}

impl Board {
    /// The board of `--board NAME`: `m4f`, `m3`, `m0` or `microbit`.
    pub fn from_name(name: &str) -> Option<Self> {
        match name {
            "m4f" => Some(Board::M4f),
            "m3" => Some(Board::M3),
            "m0" => Some(Board::M0),
            "microbit" => Some(Board::Microbit),
            _ => None,
        }
    }

    /// Retired instructions per SysTick tick under `-icount shift=0` (the
    /// device reports its cost in ticks): 40 on the MPS2 boards, 62.5 on
    /// the micro:bit (measured: ../shared QEMU notes, common practice of
    /// this project's benches).
    pub fn instructions_per_tick(self) -> f64 {
        match self {
            Board::M4f | Board::M3 | Board::M0 => 40.0,
            Board::Microbit => 62.5,
        }
    }

    /// The firmware features of the link build for this board.
    pub fn features(self) -> &'static str {
        match self {
            Board::Microbit => "link,board-microbit",
            _ => "link",
        }
    }

    /// The Rust target the firmware is built for on this board.
    pub fn target(self) -> &'static str {
        match self {
            Board::M4f => "thumbv7em-none-eabihf",
            Board::M3 => "thumbv7m-none-eabi",
            Board::M0 | Board::Microbit => "thumbv6m-none-eabi",
        }
    }

    /// Where `cargo build --release --features link --target-dir
    /// target/link --target TARGET` in `firmware/app` puts the ELF, from
    /// the repository root.
    pub fn default_elf(self) -> std::path::PathBuf {
        std::path::PathBuf::from(format!(
            "firmware/app/{}/{}/release/kappaline-app",
            self.target_dir(),
            self.target()
        ))
    }

    /// The `--target-dir` of the link build in `firmware/app`.
    pub fn target_dir(self) -> &'static str {
        match self {
            Board::Microbit => "target/link-microbit",
            _ => "target/link",
        }
    }

    fn qemu_args(self) -> &'static [&'static str] {
        match self {
            Board::M4f => &["-machine", "mps2-an386"],
            Board::M3 => &["-machine", "mps2-an385"],
            Board::M0 => &["-machine", "mps2-an385"],
            Board::Microbit => &["-machine", "microbit"],
        }
    }
}

/// QEMU running the firmware, its UART0 on a TCP port. Killed on drop.
pub struct Qemu {
    child: Child,
    stream: TcpStream,
}

/// How long QEMU gets to open its port.
const CONNECT_WITHIN: Duration = Duration::from_secs(10);

fn free_port() -> io::Result<u16> {
    let l = TcpListener::bind((Ipv4Addr::LOCALHOST, 0))?;
    Ok(l.local_addr()?.port())
}

impl Qemu {
    /// Starts `qemu-system-arm` on `elf` with instruction counting
    /// (`-icount shift=0`: the device's SysTick then counts retired
    /// instructions, 40 per tick) and connects to its UART0.
    ///
    /// # Errors
    /// If QEMU cannot be started, exits early, or does not open its port
    /// within 10 s.
    pub fn start(elf: &Path, board: Board) -> anyhow::Result<Self> {
        anyhow::ensure!(
            elf.is_file(),
            "firmware ELF {} not found (build it: cd firmware/app && cargo build --release --features {} --target-dir {} --target {})",
            elf.display(),
            board.features(),
            board.target_dir(),
            board.target()
        );
        let port = free_port()?;
        let mut child = Command::new("qemu-system-arm")
            .args(board.qemu_args())
            .args(["-display", "none", "-monitor", "none"])
            .args(["-semihosting-config", "enable=on,target=native"])
            .args(["-icount", "shift=0,align=off,sleep=off"])
            .arg("-serial")
            .arg(format!("tcp:127.0.0.1:{port},server=on,wait=on"))
            .args(["-serial", "null"])
            .arg("-kernel")
            .arg(elf)
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .spawn()
            .map_err(|e| anyhow::anyhow!("cannot start qemu-system-arm: {e}"))?;
        let addr = SocketAddr::from((Ipv4Addr::LOCALHOST, port));
        let until = Instant::now() + CONNECT_WITHIN;
        let stream = loop {
            if let Some(status) = child.try_wait()? {
                anyhow::bail!("qemu-system-arm exited before the link came up ({status})");
            }
            match TcpStream::connect_timeout(&addr, Duration::from_millis(200)) {
                Ok(s) => break s,
                Err(_) if Instant::now() < until => std::thread::sleep(Duration::from_millis(50)),
                Err(e) => {
                    let _ = child.kill();
                    let _ = child.wait();
                    anyhow::bail!("qemu-system-arm opened no link on port {port} within 10 s: {e}");
                }
            }
        };
        stream.set_nodelay(true)?;
        Ok(Self { child, stream })
    }
}

impl Drop for Qemu {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

impl Transport for Qemu {
    fn send(&mut self, bytes: &[u8]) -> io::Result<()> {
        self.stream.write_all(bytes)
    }

    fn recv(&mut self, buf: &mut [u8], deadline: Instant) -> io::Result<usize> {
        let left = deadline.saturating_duration_since(Instant::now());
        if left.is_zero() {
            return Ok(0);
        }
        self.stream.set_read_timeout(Some(left))?;
        match self.stream.read(buf) {
            Ok(0) => Err(io::Error::new(
                io::ErrorKind::UnexpectedEof,
                match self.child.try_wait() {
                    Ok(Some(status)) => format!(
                        "the device closed the link: qemu-system-arm exited ({status}; its messages are above)"
                    ),
                    _ => "the device closed the link".to_string(),
                },
            )),
            Ok(n) => Ok(n),
            Err(e)
                if matches!(
                    e.kind(),
                    io::ErrorKind::WouldBlock | io::ErrorKind::TimedOut
                ) =>
            {
                Ok(0)
            }
            Err(e) => Err(e),
        }
    }
}

/// A board on a real serial port (the `serialport` crate), 8N1, no flow
/// control.
pub struct Serial {
    port: Box<dyn serialport::SerialPort>,
}

impl Serial {
    /// Opens `spec`: `PORT` or `PORT,BAUD` (115200 baud when not given),
    /// e.g. `/dev/ttyACM0,230400`.
    ///
    /// # Errors
    /// A bad baud rate, or a port that cannot be opened (the message names
    /// it).
    pub fn open(spec: &str) -> anyhow::Result<Self> {
        let (name, baud) = match spec.split_once(',') {
            Some((n, b)) => (
                n,
                b.trim()
                    .parse::<u32>()
                    .ok()
                    .filter(|b| *b > 0)
                    .ok_or_else(|| {
                        anyhow::anyhow!(
                            "--link serial:{spec}: baud `{b}` is not a positive integer"
                        )
                    })?,
            ),
            None => (spec, 115_200),
        };
        anyhow::ensure!(
            !name.is_empty(),
            "--link serial:PORT[,BAUD]: the port is missing"
        );
        let port = serialport::new(name, baud)
            .timeout(Duration::from_millis(100))
            .open()
            .map_err(|e| anyhow::anyhow!("cannot open serial port {name} at {baud} baud: {e}"))?;
        Ok(Self { port })
    }
}

impl Transport for Serial {
    fn send(&mut self, bytes: &[u8]) -> io::Result<()> {
        self.port.write_all(bytes)?;
        self.port.flush()
    }

    fn recv(&mut self, buf: &mut [u8], deadline: Instant) -> io::Result<usize> {
        let left = deadline.saturating_duration_since(Instant::now());
        if left.is_zero() {
            return Ok(0);
        }
        self.port
            .set_timeout(left)
            .map_err(|e| io::Error::other(e.to_string()))?;
        match self.port.read(buf) {
            Ok(n) => Ok(n),
            Err(e)
                if matches!(
                    e.kind(),
                    io::ErrorKind::WouldBlock | io::ErrorKind::TimedOut
                ) =>
            {
                Ok(0)
            }
            Err(e) => Err(e),
        }
    }
}
