//! `gateway`: the kernel as an edge gateway would run it. A scan loop (its
//! own thread, fixed period) runs the invented demo train with a surge
//! monitor, a surge detector and two 4–20 mA channels, packs every scan
//! into a [`polytrope::registers::RegisterImage`] and publishes it; a
//! Modbus TCP server on 127.0.0.1 (`tokio-modbus`) serves the latest image
//! as read-only input registers and accepts guarded commands in a
//! four-register holding block.
//!
//! Guards: reads past the image, writes outside the command block and
//! function codes the gateway does not serve get the proper Modbus
//! exception and the connection keeps working; connections are bounded,
//! each connection's request rate is bounded (requests above it wait), an
//! idle connection is closed, and no client ever holds a lock the scan loop
//! needs for longer than a pointer copy.
//!
//! `register-map` prints the map of this image (Markdown or CSV).
//!
//! Caution: advisory values and an advisory trip request; not a certified
//! safety function (IEC 61508 / IEC 61511). The demo data, the surge line
//! and the transmitters are an invented scenario.

use std::fmt::Write as _;
use std::future::Future;
use std::io;
use std::net::SocketAddr;
use std::pin::Pin;
use std::sync::atomic::{AtomicBool, AtomicU64, AtomicUsize, Ordering};
use std::sync::mpsc;
use std::sync::{Arc, Mutex};
use std::task::{Context, Poll};
use std::time::{Duration, Instant};

use polytrope::ledger::{evaluate_ledger_into, Ledger, LedgerConfig};
use polytrope::registers::{
    self, crc32, decode_command, image_len, CommandError, CommandKind, FieldValue, RegisterImage,
    ResultFields, SurgeView, WordOrder, COMMAND_REGISTERS,
};
use polytrope::signal::{Channel, ChannelConfig, ChannelOutput, InstrumentClass, SignalKind, Unit};
use polytrope::surge::{
    DetectionConfig, DetectionScan, MapConditions, MonitorConfig, SurgeDetector, SurgeLine,
    SurgeLineConfig, SurgeMonitor, SurgePoint, SurgeScan,
};
use polytrope::train::StageWork;
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::{demo, ConfigError, Measured, Quality};
use tokio::io::{AsyncRead, AsyncWrite, ReadBuf};
use tokio_modbus::{ExceptionCode, Request, Response};

use crate::cli::{count, CliError, Parsed};

/// Surge monitors of the demo gateway.
pub const SURGE: usize = 1;
/// Channels of the demo gateway.
pub const CHANNELS: usize = 2;
const N: usize = demo::STAGES;
/// Registers of the demo gateway's image.
pub const REGISTERS: usize = image_len(N, SURGE, CHANNELS);
type Image = RegisterImage<N, SURGE, CHANNELS, REGISTERS>;
/// Largest read (Modbus application protocol: 125 registers).
const MAX_READ: u16 = 125;

/// The `register-map` subcommand.
pub fn run_map(a: &RegisterMapArgs) -> Result<String, CliError> {
    register_map(a.csv).ok_or_else(|| CliError::Input("could not format the map".into()))
}

/// The register map of the gateway's image, CSV or Markdown.
pub fn register_map(csv: bool) -> Option<String> {
    let mut s = String::new();
    let r = if csv {
        registers::write_map_csv(&mut s, N, SURGE, CHANNELS)
    } else {
        registers::write_map_markdown(&mut s, N, SURGE, CHANNELS)
    };
    r.ok().map(|()| s)
}

// ---- the plant: demo train, surge monitor, detector, channels ------------

type Monitor = SurgeMonitor<f32, 4>;
type Detector = SurgeDetector<f32, 16, 4>;
type Transmitter = Channel<f32, 8, 5>;

/// Everything the scan loop owns.
pub struct Plant {
    train: demo::DemoTrain<f32>,
    monitor: Monitor,
    detector: Detector,
    channels: [Transmitter; CHANNELS],
    outputs: [ChannelOutput<f32>; CHANNELS],
    view: SurgeView<f32>,
    /// The loss ledger of the last scan (first-suction reference, no loop).
    ledger: Ledger<f32, N>,
    image: Image,
    scan_ms: u32,
    next: u32,
}

/// Suction-pressure transmitter span (absolute), Pa (invented).
const P_SPAN: f32 = 2.0e5;
/// Flow-element differential-pressure span, Pa (invented).
const DP_SPAN: f32 = 5000.0;
/// Flow-element differential pressure at the demo's mean flow, Pa (invented).
const DP_AT_MEAN_FLOW: f64 = 3000.0;

fn transmitter(
    id: u8,
    unit: Unit<f32>,
    high: f32,
    plausible: (f32, f32),
) -> Result<Transmitter, ConfigError> {
    Transmitter::new(ChannelConfig {
        id,
        signal: SignalKind::Current4To20,
        unit,
        range_low: 0.0,
        range_high: high,
        plausible_low: plausible.0,
        plausible_high: plausible.1,
        noise_floor: high * 1e-4,
        instrument: InstrumentClass::FractionOfSpan(0.001),
        max_rate: high * 10.0,
        filter_time_constant_s: 0.2,
        hold_ms: 1000,
    })
}

/// The invented first-stage surge line (demo data, not a real machine).
fn surge_monitor(scan_s: f32) -> Result<Monitor, ConfigError> {
    let p = |rpm: f32, q: f32, r: f32, m: f32| SurgePoint {
        speed_rpm: rpm,
        suction_volume_flow: q,
        pressure_ratio: r,
        control_margin: m,
    };
    let points = [
        p(8000.0, 0.50, 2.2, 0.12),
        p(9000.0, 0.59, 2.7, 0.11),
        p(10000.0, 0.68, 3.2, 0.10),
        p(11000.0, 0.78, 3.8, 0.10),
    ];
    let line = SurgeLine::new(&SurgeLineConfig {
        points: &points,
        map: MapConditions {
            suction_pressure: PressureAbs::from_pa(1.05e5),
            suction_temperature: Kelvin::new(303.15),
            molar_mass: 44.01,
            compressibility: 0.99,
        },
        polytropic_exponent: 1.36,
        flow_coefficient: 0.02,
    })?;
    Monitor::new(
        line,
        MonitorConfig {
            scan_period: scan_s,
            time_to_surge_horizon: 60.0,
            rate_filter_time: (0.1_f32).max(scan_s),
        },
    )
}

impl Plant {
    /// Builds the invented plant; `checksum` goes into the header.
    pub fn new(scan_ms: u32, order: WordOrder) -> Result<Plant, ConfigError> {
        let scan_s = scan_ms as f32 / 1e3;
        let train = demo::train::<f32>()?;
        // The configuration checksum: CRC-32 of the configuration as the
        // gateway holds it (here its debug text; a real gateway hashes the
        // stored configuration file).
        let text = format!("{:?}|scan_ms={scan_ms}", train.config());
        let detector = Detector::new(DetectionConfig {
            scan_period: scan_s,
            window: (0.64_f32).max(4.0 * scan_s),
            flow_lag: 0.1,
            flow_dp_drop: 0.3,
            min_flow_dp: 500.0,
            pressure_rise_drop: 0.1,
            suction_temperature_rise: 2.0,
            holdoff: 1.0,
            added_margin_per_cycle: 0.02,
            max_added_margin: 0.1,
            trip_count: 3,
            trip_window: 20.0,
        })?;
        let channels = [
            transmitter(1, Unit::PressureAbs, P_SPAN, (0.3e5, 1.9e5))?,
            transmitter(2, Unit::DifferentialPressure, DP_SPAN, (-100.0, 5000.0))?,
        ];
        Ok(Plant {
            train,
            monitor: surge_monitor(scan_s)?,
            detector,
            outputs: [ChannelOutput::bad(1), ChannelOutput::bad(2)],
            channels,
            view: SurgeView {
                state: polytrope::surge::SurgeState::bad(),
                detection: polytrope::surge::DetectionState {
                    surge_this_scan: false,
                    event_count: 0,
                    events_in_window: 0,
                    added_margin: 0.0,
                    trip_request: false,
                    blind: true,
                    armed: false,
                },
            },
            ledger: Ledger::bad(),
            image: Image::new(order, crc32(text.as_bytes())),
            scan_ms,
            next: 0,
        })
    }

    /// One scan: measurements of scan `next`, every kernel update, the image.
    pub fn step(&mut self) {
        let i = self.next;
        self.next = self.next.wrapping_add(1);
        let scan = demo::scan::<f32>(i);
        // The channels' 32-bit millisecond tick (wraps like a device timer).
        let t_ms = i.wrapping_mul(self.scan_ms);
        let s1 = scan.stages.first().copied();
        let (p1, p2, t1, flow) = match s1 {
            Some(s) => (
                s.suction_pressure.value.pa(),
                s.discharge_pressure,
                s.suction_temperature,
                s.mass_flow.map_or(11.5, |m| m.value),
            ),
            None => (
                0.0,
                Measured::new(PressureAbs::from_pa(0.0), Quality::Bad),
                Measured::new(Kelvin::new(0.0), Quality::Bad),
                0.0,
            ),
        };
        // Transmitter currents (invented): 4-20 mA over each span.
        let dp = (DP_AT_MEAN_FLOW * (f64::from(flow) / 11.5).powi(2)) as f32;
        let ma = |v: f32, span: f32| 4.0 + 16.0 * v / span;
        let raws = [ma(p1, P_SPAN), ma(dp, DP_SPAN)];
        for ((ch, out), raw) in self
            .channels
            .iter_mut()
            .zip(self.outputs.iter_mut())
            .zip(raws)
        {
            *out = ch.update(raw, t_ms);
        }
        let [pressure, flow_dp] = self.outputs;
        let added = self.view.detection.added_margin;
        let dt = self.scan_ms as f32 / 1e3;
        let state = *self.monitor.update(
            &SurgeScan::pressures_only(pressure.raw_pressure(), p2, flow_dp.raw),
            added,
            dt,
        );
        let detection = *self.detector.update(
            &DetectionScan {
                flow_dp: flow_dp.raw,
                suction_pressure: pressure.raw_pressure(),
                discharge_pressure: p2,
                suction_temperature: Some(t1),
            },
            dt,
        );
        self.view = SurgeView { state, detection };
        let snapshot = self.train.update(&scan);
        self.image.pack(snapshot, &[self.view], &self.outputs);
        evaluate_ledger_into(
            self.train.config(),
            &LedgerConfig::default(),
            &scan,
            self.train.snapshot(),
            Measured::bad(),
            &mut self.ledger,
        );
        self.image.pack_ledger(&self.ledger);
    }

    /// The image.
    pub fn registers(&self) -> &[u16] {
        self.image.registers()
    }

    /// Carries out a decoded command.
    fn apply(&mut self, c: registers::Command) {
        match c.kind {
            CommandKind::AcknowledgeSurgeEvents => {
                let n = self.view.detection.event_count;
                self.image
                    .acknowledge_surge_events(usize::from(c.target), n);
            }
            CommandKind::ResetAddedMargin => self.detector.reset_added_margin(),
            CommandKind::ResetTripRequest => self.detector.reset_trip(),
        }
        self.image.record_command(c);
    }

    /// The kernel's results of the last scan as one JSON line, straight
    /// from the result types (not from the image): what an outside client
    /// checks the registers against.
    pub fn results_json(&self) -> String {
        let snap = self.train.snapshot();
        let mut s = format!("{{\"scan_count\":{},\"fields\":{{", snap.scan_count);
        let mut first = true;
        let mut raw = |block: &str, inst: usize, key: &str, text: &str| {
            if !first {
                s.push(',');
            }
            first = false;
            let _ = write!(s, "\"{block}.{inst}.{key}\":{text}");
        };
        let json = |v: FieldValue<f32>| match v {
            FieldValue::Real(m) => format!("[{:?},\"{}\"]", m.value, quality_name(m.quality)),
            FieldValue::Plain(x) => format!("[{x:?},\"good\"]"),
            FieldValue::Count(n) => format!("[{n},\"good\"]"),
            FieldValue::Flag(b) => format!("{b}"),
            FieldValue::Tag(t) => format!("\"{t}\""),
        };
        let mut put = |block: &str, inst: usize, key: &str, v: FieldValue<f32>| {
            raw(block, inst, key, &json(v));
        };
        for (i, st) in snap.stages.iter().enumerate() {
            let mut v = |f: &registers::FieldSpec, x| put("stage", i + 1, f.key, x);
            match &st.work {
                StageWork::Compressor(c) => {
                    c.visit_fields(&mut v);
                    let code = registers::stage_condition_code(c.condition);
                    v(&CODE, FieldValue::Count(u32::from(code)));
                }
                StageWork::Pump(p) => {
                    p.visit_fields(&mut v);
                    let code = registers::pump_condition_code(p.condition);
                    v(&CODE, FieldValue::Count(u32::from(code)));
                }
            }
            st.steady_state.visit_fields(&mut v);
        }
        for (i, c) in snap.coolers.iter().enumerate() {
            if let Some(c) = c {
                c.visit_fields(&mut |f, x| put("cooler", i + 1, f.key, x));
                let code = registers::cooler_condition_code(c.condition);
                put(
                    "cooler",
                    i + 1,
                    CODE.key,
                    FieldValue::Count(u32::from(code)),
                );
            }
        }
        for (i, p) in snap.interstage.iter().enumerate() {
            if let Some(p) = p {
                p.visit_fields(&mut |f, x| put("interstage", i + 1, f.key, x));
            }
        }
        snap.totals
            .visit_fields(&mut |f, x| put("totals", 0, f.key, x));
        self.ledger
            .visit_fields(&mut |f, x| put("ledger", 0, f.key, x));
        for i in 0..N {
            if let Some(st) = self.ledger.stage(i) {
                st.visit_fields(&mut |f, x| put("ledger_stage", i + 1, f.key, x));
            }
        }
        self.view
            .state
            .visit_fields(&mut |f, x| put("surge", 1, f.key, x));
        self.view
            .detection
            .visit_fields(&mut |f, x| put("surge", 1, f.key, x));
        let code = registers::surge_fault_code(self.view.state.fault);
        put("surge", 1, CODE.key, FieldValue::Count(u32::from(code)));
        for (i, out) in self.outputs.iter().enumerate() {
            out.visit_fields(&mut |f, x| put("channel", i + 1, f.key, x));
            let code = u32::from(out.status.fault.code());
            put("channel", i + 1, CODE.key, FieldValue::Count(code));
        }
        s.push_str("}}\n");
        s
    }
}

/// The status-word code in the results lines (`condition_code`: compressor,
/// pump or cooler condition, surge-margin fault, channel fault code), as the register image carries it.
static CODE: registers::FieldSpec = registers::FieldSpec {
    name: "code",
    key: "condition_code",
    label: "Status-word code",
    unit: "",
    kind: registers::QuantityKind::Count,
    derivation: polytrope::fields::Derivation::Exact,
    meaning: "The state code of the block's status word.",
};

fn quality_name(q: Quality) -> &'static str {
    q.as_str()
}

// ---- the server ------------------------------------------------------------

/// State shared by the scan loop and the connections.
struct Shared {
    /// The latest image; the scan loop swaps the pointer, readers clone it.
    image: Mutex<Arc<Vec<u16>>>,
    /// Last values written to the command block (read back by function 03).
    holding: Mutex<[u16; COMMAND_REGISTERS]>,
    commands: mpsc::SyncSender<registers::Command>,
    connections: AtomicUsize,
    max_connections: usize,
    min_interval: Duration,
    requests: AtomicU64,
    exceptions: AtomicU64,
    refused_connections: AtomicU64,
    idle_closed: AtomicU64,
}

/// One connection's service.
struct Connection {
    shared: Arc<Shared>,
    next_slot: Mutex<Instant>,
}

impl Drop for Connection {
    fn drop(&mut self) {
        self.shared.connections.fetch_sub(1, Ordering::SeqCst);
    }
}

fn lock<T>(m: &Mutex<T>) -> std::sync::MutexGuard<'_, T> {
    m.lock().unwrap_or_else(std::sync::PoisonError::into_inner)
}

impl Shared {
    fn answer(&self, req: Request<'static>) -> Result<Response, ExceptionCode> {
        match req {
            Request::ReadInputRegisters(addr, qty) => {
                if qty == 0 || qty > MAX_READ {
                    return Err(ExceptionCode::IllegalDataValue);
                }
                let image = Arc::clone(&lock(&self.image));
                let (a, n) = (usize::from(addr), usize::from(qty));
                match image.get(a..a + n) {
                    Some(words) => Ok(Response::ReadInputRegisters(words.to_vec())),
                    None => Err(ExceptionCode::IllegalDataAddress),
                }
            }
            Request::ReadHoldingRegisters(addr, qty) => {
                if qty == 0 || qty > MAX_READ {
                    return Err(ExceptionCode::IllegalDataValue);
                }
                let block = *lock(&self.holding);
                let (a, n) = (usize::from(addr), usize::from(qty));
                match block.get(a..a + n) {
                    Some(words) => Ok(Response::ReadHoldingRegisters(words.to_vec())),
                    None => Err(ExceptionCode::IllegalDataAddress),
                }
            }
            Request::WriteMultipleRegisters(addr, words) => {
                let end = usize::from(addr) + words.len();
                if end > COMMAND_REGISTERS || words.is_empty() {
                    return Err(ExceptionCode::IllegalDataAddress);
                }
                let c = decode_command(addr, &words, SURGE).map_err(|e| match e {
                    CommandError::Incomplete
                    | CommandError::UnknownCommand
                    | CommandError::GuardMismatch
                    | CommandError::NoSuchTarget => ExceptionCode::IllegalDataValue,
                })?;
                self.commands
                    .try_send(c)
                    .map_err(|_| ExceptionCode::ServerDeviceBusy)?;
                let mut block = lock(&self.holding);
                for (dst, w) in block.iter_mut().zip(words.iter()) {
                    *dst = *w;
                }
                Ok(Response::WriteMultipleRegisters(addr, words.len() as u16))
            }
            Request::WriteSingleRegister(addr, _) => {
                if usize::from(addr) >= COMMAND_REGISTERS {
                    Err(ExceptionCode::IllegalDataAddress)
                } else {
                    // A command needs the whole block in one request.
                    Err(ExceptionCode::IllegalDataValue)
                }
            }
            _ => Err(ExceptionCode::IllegalFunction),
        }
    }
}

type Reply = Pin<Box<dyn Future<Output = Result<Response, ExceptionCode>> + Send>>;

impl tokio_modbus::server::Service for Connection {
    type Request = Request<'static>;
    type Response = Response;
    type Exception = ExceptionCode;
    type Future = Reply;

    fn call(&self, req: Self::Request) -> Self::Future {
        // Rate bound: each request takes the next slot of this connection;
        // a request early for its slot waits (only this client waits).
        let now = Instant::now();
        let wait = {
            let mut next = lock(&self.next_slot);
            let slot = (*next).max(now);
            *next = slot + self.shared.min_interval;
            slot - now
        };
        let shared = Arc::clone(&self.shared);
        Box::pin(async move {
            if !wait.is_zero() {
                tokio::time::sleep(wait).await;
            }
            shared.requests.fetch_add(1, Ordering::Relaxed);
            let r = shared.answer(req);
            if r.is_err() {
                shared.exceptions.fetch_add(1, Ordering::Relaxed);
            }
            r
        })
    }
}

/// A TCP stream that fails a read after `idle` without data, so a stalled
/// client frees its connection slot.
struct IdleStream {
    inner: tokio::net::TcpStream,
    idle: Duration,
    deadline: Pin<Box<tokio::time::Sleep>>,
    shared: Arc<Shared>,
}

impl AsyncRead for IdleStream {
    fn poll_read(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        buf: &mut ReadBuf<'_>,
    ) -> Poll<io::Result<()>> {
        let before = buf.filled().len();
        match Pin::new(&mut self.inner).poll_read(cx, buf) {
            Poll::Ready(r) => {
                if buf.filled().len() > before {
                    let at = tokio::time::Instant::now() + self.idle;
                    self.deadline.as_mut().reset(at);
                }
                Poll::Ready(r)
            }
            Poll::Pending => match self.deadline.as_mut().poll(cx) {
                Poll::Ready(()) => {
                    self.shared.idle_closed.fetch_add(1, Ordering::Relaxed);
                    Poll::Ready(Err(io::Error::new(io::ErrorKind::TimedOut, "idle")))
                }
                Poll::Pending => Poll::Pending,
            },
        }
    }
}

impl AsyncWrite for IdleStream {
    fn poll_write(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        b: &[u8],
    ) -> Poll<io::Result<usize>> {
        Pin::new(&mut self.inner).poll_write(cx, b)
    }
    fn poll_flush(mut self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        Pin::new(&mut self.inner).poll_flush(cx)
    }
    fn poll_shutdown(mut self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        Pin::new(&mut self.inner).poll_shutdown(cx)
    }
}

/// Scan-loop timing.
#[derive(Default)]
struct LoopStats {
    periods_ms: Vec<f64>,
    work_ms: Vec<f64>,
    late: u64,
    realtime: bool,
}

/// Asks for a real-time (FIFO) priority for the calling thread, as a
/// gateway runs its control loop; `false` where that is not permitted (the
/// loop then runs at normal priority).
fn realtime_priority() -> bool {
    use thread_priority::{
        set_thread_priority_and_policy, thread_native_id, RealtimeThreadSchedulePolicy,
        ThreadPriority, ThreadSchedulePolicy,
    };
    let Ok(value) = 50u8.try_into() else {
        return false;
    };
    set_thread_priority_and_policy(
        thread_native_id(),
        ThreadPriority::Crossplatform(value),
        ThreadSchedulePolicy::Realtime(RealtimeThreadSchedulePolicy::Fifo),
    )
    .is_ok()
}

fn percentile(v: &[f64], p: f64) -> f64 {
    let mut s = v.to_vec();
    s.sort_by(f64::total_cmp);
    let i = ((s.len() as f64 - 1.0) * p).round() as usize;
    s.get(i).copied().unwrap_or(0.0)
}

/// The scan loop: fixed period, absolute deadlines, never waits on a client.
fn scan_loop(
    mut plant: Plant,
    period: Duration,
    shared: Arc<Shared>,
    commands: mpsc::Receiver<registers::Command>,
    stop: Arc<AtomicBool>,
) -> LoopStats {
    let mut stats = LoopStats {
        realtime: realtime_priority(),
        ..LoopStats::default()
    };
    let mut next = Instant::now();
    let mut last: Option<Instant> = None;
    while !stop.load(Ordering::Relaxed) {
        let now = Instant::now();
        if next > now {
            std::thread::sleep(next - now);
        }
        let start = Instant::now();
        if let Some(l) = last {
            stats.periods_ms.push((start - l).as_secs_f64() * 1e3);
        }
        last = Some(start);
        while let Ok(c) = commands.try_recv() {
            plant.apply(c);
        }
        plant.step();
        let image = Arc::new(plant.registers().to_vec());
        *lock(&shared.image) = image;
        stats.work_ms.push(start.elapsed().as_secs_f64() * 1e3);
        next += period;
        if Instant::now() > next {
            // Behind (a slow machine, not a client): count it, do not burst.
            stats.late += 1;
            next = Instant::now();
        }
    }
    stats
}

fn parse_range(text: &str) -> Result<(u32, u32), CliError> {
    let bad = || {
        CliError::Input(format!(
            "--results: '{text}' is not FROM..TO with 1 <= FROM <= TO <= 100000"
        ))
    };
    let (a, b) = text.split_once("..").ok_or_else(bad)?;
    let a = a.trim().parse::<u32>().map_err(|_| bad())?;
    let b = b.trim().parse::<u32>().map_err(|_| bad())?;
    if a == 0 || b < a || b > 100_000 {
        return Err(bad());
    }
    Ok((a, b))
}

/// What the gateway does, independent of the command-line parser.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Options {
    /// TCP port on 127.0.0.1 (0: any free port).
    pub port: u16,
    /// Scan period, ms.
    pub scan_ms: u32,
    /// Run time, s.
    pub run_for_s: u32,
    /// Word order of 32-bit values.
    pub order: WordOrder,
    /// Simultaneous connections.
    pub max_connections: u32,
    /// Requests per second per connection.
    pub max_rate: u32,
    /// Idle time after which a connection is closed, s.
    pub idle_s: u32,
    /// Print the kernel's results for these scan counters instead of serving.
    pub results: Option<(u32, u32)>,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            port: 5020,
            scan_ms: 100,
            run_for_s: 60,
            order: WordOrder::HighWordFirst,
            max_connections: 128,
            max_rate: 200,
            idle_s: 10,
            results: None,
        }
    }
}

/// The `gateway` subcommand.
pub fn run(p: &Parsed) -> Result<String, CliError> {
    let d = Options::default();
    let order = match p.get("word-order") {
        None | Some("high-first") => WordOrder::HighWordFirst,
        Some("low-first") => WordOrder::LowWordFirst,
        Some(o) => {
            return Err(CliError::Usage(format!(
                "--word-order: '{o}' is not high-first or low-first"
            )))
        }
    };
    let opt = |name: &str, default: u32, lo: u32, hi: u32| {
        p.get(name).map_or(Ok(default), |t| count(name, t, lo, hi))
    };
    let o = Options {
        port: opt("port", u32::from(d.port), 0, 65_535)? as u16,
        scan_ms: opt("scan-ms", d.scan_ms, 1, 1000)?,
        run_for_s: opt("run-for-s", d.run_for_s, 1, 86_400)?,
        order,
        max_connections: opt("max-connections", d.max_connections, 1, 1000)?,
        max_rate: opt("max-rate", d.max_rate, 1, 100_000)?,
        idle_s: opt("idle-s", d.idle_s, 1, 3600)?,
        results: p.get("results").map(parse_range).transpose()?,
    };
    run_gateway(&o).map_err(|e| match e {
        GatewayError::Config(c) => CliError::Config(c),
        GatewayError::Io(m) => CliError::Input(m),
    })
}

/// Why the gateway stopped.
#[derive(Debug)]
pub enum GatewayError {
    /// The kernel refused the (built-in) configuration.
    Config(ConfigError),
    /// A socket, thread or runtime could not be set up.
    Io(String),
}

impl From<ConfigError> for GatewayError {
    fn from(e: ConfigError) -> Self {
        GatewayError::Config(e)
    }
}

/// Runs the gateway (or prints results for `o.results`); returns the text
/// to print: the JSON results lines, or the scan-loop statistics.
pub fn run_gateway(o: &Options) -> Result<String, GatewayError> {
    let Options {
        port,
        scan_ms,
        run_for_s: run_for,
        order,
        max_connections,
        max_rate,
        idle_s: idle,
        results,
    } = *o;
    let mut plant = Plant::new(scan_ms, order)?;
    if let Some((from, to)) = results {
        let mut out = String::new();
        for k in 1..=to {
            plant.step();
            if k >= from {
                out.push_str(&plant.results_json());
            }
        }
        return Ok(out);
    }

    plant.step();
    let (tx, rx) = mpsc::sync_channel(16);
    let shared = Arc::new(Shared {
        image: Mutex::new(Arc::new(plant.registers().to_vec())),
        holding: Mutex::new([0; COMMAND_REGISTERS]),
        commands: tx,
        connections: AtomicUsize::new(0),
        max_connections: max_connections as usize,
        min_interval: Duration::from_secs_f64(1.0 / f64::from(max_rate)),
        requests: AtomicU64::new(0),
        exceptions: AtomicU64::new(0),
        refused_connections: AtomicU64::new(0),
        idle_closed: AtomicU64::new(0),
    });
    let stop = Arc::new(AtomicBool::new(false));
    let period = Duration::from_millis(u64::from(scan_ms));
    let loop_thread = {
        let (shared, stop) = (Arc::clone(&shared), Arc::clone(&stop));
        std::thread::Builder::new()
            .name("scan-loop".into())
            .spawn(move || scan_loop(plant, period, shared, rx, stop))
            .map_err(|e| GatewayError::Io(format!("cannot start the scan loop: {e}")))?
    };
    let runtime = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
        .map_err(|e| GatewayError::Io(format!("cannot start the server runtime: {e}")))?;
    let served = runtime.block_on(serve(
        SocketAddr::from(([127, 0, 0, 1], port)),
        Arc::clone(&shared),
        Duration::from_secs(u64::from(idle)),
        Duration::from_secs(u64::from(run_for)),
    ));
    stop.store(true, Ordering::Relaxed);
    let stats = loop_thread
        .join()
        .map_err(|_| GatewayError::Io("the scan loop stopped abnormally".into()))?;
    served.map_err(|e| GatewayError::Io(format!("server: {e}")))?;
    let mean = stats.periods_ms.iter().sum::<f64>() / stats.periods_ms.len().max(1) as f64;
    let max = stats.periods_ms.iter().copied().fold(0.0, f64::max);
    Ok(format!(
        "{{\"scans\":{},\"scan_ms\":{scan_ms},\"period_mean_ms\":{mean:.3},\"period_p99_ms\":{:.3},\"period_max_ms\":{max:.3},\
         \"work_p99_ms\":{:.3},\"late_scans\":{},\"realtime_priority\":{},\"requests\":{},\"exceptions\":{},\"refused_connections\":{},\"idle_closed\":{}}}\n",
        stats.periods_ms.len() + 1,
        percentile(&stats.periods_ms, 0.99),
        percentile(&stats.work_ms, 0.99),
        stats.late,
        stats.realtime,
        shared.requests.load(Ordering::Relaxed),
        shared.exceptions.load(Ordering::Relaxed),
        shared.refused_connections.load(Ordering::Relaxed),
        shared.idle_closed.load(Ordering::Relaxed),
    ))
}

async fn serve(
    addr: SocketAddr,
    shared: Arc<Shared>,
    idle: Duration,
    run_for: Duration,
) -> io::Result<()> {
    let listener = tokio::net::TcpListener::bind(addr).await?;
    let local = listener.local_addr()?;
    eprintln!("gateway: serving Modbus TCP on {local} ({REGISTERS} input registers; invented demo scenario)");
    let server = tokio_modbus::server::tcp::Server::new(listener);
    let on_connected = |stream: tokio::net::TcpStream, _peer: SocketAddr| {
        let shared = Arc::clone(&shared);
        async move {
            let n = shared.connections.fetch_add(1, Ordering::SeqCst);
            let service = Connection {
                shared: Arc::clone(&shared),
                next_slot: Mutex::new(Instant::now()),
            };
            if n >= shared.max_connections {
                shared.refused_connections.fetch_add(1, Ordering::Relaxed);
                drop(service); // gives the slot back; the stream closes
                return Ok(None);
            }
            let _ = stream.set_nodelay(true);
            let stream = IdleStream {
                inner: stream,
                idle,
                deadline: Box::pin(tokio::time::sleep(idle)),
                shared: Arc::clone(&shared),
            };
            Ok(Some((service, stream)))
        }
    };
    let on_error = |_e: io::Error| {};
    match server
        .serve_until(&on_connected, on_error, tokio::time::sleep(run_for))
        .await
    {
        Ok(_) => Ok(()),
        Err(e) => Err(e),
    }
}

/// Options of `gateway`.
#[derive(Debug, clap::Args)]
pub struct GatewayArgs {
    /// TCP port on 127.0.0.1 (default 5020; 0 picks a free port, printed on stderr).
    #[arg(long, value_name = "PORT")]
    port: Option<String>,
    /// Scan period in ms, 1 to 1000 (default 100).
    #[arg(long, value_name = "MS")]
    scan_ms: Option<String>,
    /// Stop after S seconds and print the scan-loop statistics (default 60, at most 86400).
    #[arg(long, value_name = "S")]
    run_for_s: Option<String>,
    /// 32-bit word order: high-first (default) or low-first.
    #[arg(long, value_name = "ORDER")]
    word_order: Option<String>,
    /// Simultaneous connections, 1 to 1000 (default 128); more are closed at once.
    #[arg(long, value_name = "N")]
    max_connections: Option<String>,
    /// Requests per second per connection, 1 to 100000 (default 200); faster requests wait.
    #[arg(long, value_name = "HZ")]
    max_rate: Option<String>,
    /// Close a connection that sends nothing for S seconds, 1 to 3600 (default 10).
    #[arg(long, value_name = "S")]
    idle_s: Option<String>,
    /// Print the kernel's results for scan counters FROM to TO as JSON lines and exit (no server).
    #[arg(long, value_name = "FROM..TO")]
    results: Option<String>,
}

impl GatewayArgs {
    /// As [`run`] reads them.
    pub fn parsed(&self) -> Parsed {
        Parsed::default()
            .opt("port", &self.port)
            .opt("scan-ms", &self.scan_ms)
            .opt("run-for-s", &self.run_for_s)
            .opt("word-order", &self.word_order)
            .opt("max-connections", &self.max_connections)
            .opt("max-rate", &self.max_rate)
            .opt("idle-s", &self.idle_s)
            .opt("results", &self.results)
    }
}

/// Options of `register-map`.
#[derive(Debug, clap::Args)]
pub struct RegisterMapArgs {
    /// CSV for import into a PLC tool (default: Markdown).
    #[arg(long)]
    csv: bool,
}
