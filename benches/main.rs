//! `thermosieve-bench`: the throughput targets in one run. N cases (the demo repeated)
//! - through the embedded run in this process, against the engine alone on the same threads;
//! - end to end through a `thermosieve serve` front, redis-server and 2 `thermosieve work`
//!   processes, against the engine alone (CPU seconds and peak RSS of every process);
//! - then a one-case `run` and an `eval` (median wall time of 15 each) and the binary's size;
//!
//! and a closing table of the six targets with the machine's core count. Everything runs on
//! loopback and stops at the end. `--embedded` and `--stages` run one part alone.
//!
//! Build and run (release): `cargo build --release --locked -p thermosieve-cli -p thermosieve-bench`
//! then `target/release/thermosieve-bench --cases 1000000`.

use anyhow::{bail, Context};

/// Many small strings per case: mimalloc instead of the system allocator.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;
use clap::Parser;
use std::ffi::OsStr;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};
use thermosieve_cli::input;
use thermosieve_engine::{species, Screener, TemperatureGrid};
use thermosieve_model::CaseInput;
use thermosieve_model::Table;
use thermosieve_proto::v1 as pb;
use thermosieve_proto::v1::screening_client::ScreeningClient;

#[derive(Parser, Debug)]
struct Args {
    /// Cases to screen (the demo batch repeated with fresh ids).
    #[arg(long, default_value_t = 1_000_000)]
    cases: usize,
    /// Worker processes (one engine thread each).
    #[arg(long, default_value_t = 2)]
    workers: usize,
    /// Cases per chunk (0: the front's default, 2000).
    #[arg(long, default_value_t = 0)]
    chunk_size: u32,
    /// The thermosieve binary (default: next to this one).
    #[arg(long)]
    thermosieve: Option<PathBuf>,
    /// Instead of the end-to-end run: time a worker's steps per chunk on one thread, in
    /// process (screening with rows, frames, Parquet encoding of each part).
    #[arg(long)]
    stages: bool,
    /// Instead of the service run: the embedded run (`thermosieve run`'s path, in this
    /// process, every table written) against the engine with the process view on the same
    /// threads, and the ratio.
    #[arg(long)]
    embedded: bool,
    /// Engine threads for `--embedded` (default: every core).
    #[arg(long)]
    threads: Option<usize>,
    /// Demo input to repeat.
    #[arg(long, default_value = "examples/nightly_screen.csv")]
    input: PathBuf,
}

struct Proc(Child);

impl Drop for Proc {
    fn drop(&mut self) {
        let _ = Command::new("kill").arg("-TERM").arg(self.0.id().to_string()).status();
        let _ = self.0.wait();
    }
}

fn vm_hwm_kb(pid: u32) -> u64 {
    std::fs::read_to_string(format!("/proc/{pid}/status"))
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("VmHWM:"))
                .and_then(|l| l.split_whitespace().nth(1))
                .and_then(|v| v.parse().ok())
        })
        .unwrap_or(0)
}

/// CPU seconds (user + system, all threads) a process has used so far.
fn cpu_seconds(pid: &str, ticks_per_s: f64) -> f64 {
    std::fs::read_to_string(format!("/proc/{pid}/stat"))
        .ok()
        .and_then(|s| {
            // Fields after the parenthesised command name; utime and stime are fields 14 and 15.
            let rest = s.rsplit_once(')')?.1;
            let f: Vec<&str> = rest.split_whitespace().collect();
            Some((f.get(11)?.parse::<f64>().ok()? + f.get(12)?.parse::<f64>().ok()?) / ticks_per_s)
        })
        .unwrap_or(f64::NAN)
}

fn clock_ticks_per_second() -> f64 {
    Command::new("getconf")
        .arg("CLK_TCK")
        .output()
        .ok()
        .and_then(|o| String::from_utf8(o.stdout).ok())
        .and_then(|s| s.trim().parse().ok())
        .unwrap_or(100.0)
}

fn free_port() -> anyhow::Result<u16> {
    Ok(std::net::TcpListener::bind("127.0.0.1:0")?.local_addr()?.port())
}

fn cases(demo: &[CaseInput], n: usize) -> impl Iterator<Item = CaseInput> + '_ {
    (0..n).map(move |i| {
        let mut c = demo[i % demo.len()].clone();
        let rep = i / demo.len();
        c.case_id = format!("{}-x{rep}", c.case_id);
        c.route_id = c.route_id.map(|r| format!("{r}-x{rep}"));
        c.row = i as u64 + 1;
        c
    })
}

/// The engine alone on the same cases, on `threads` threads: cases/s. With `process`, each case
/// also gets its process view at its conditions (what a worker asks of the engine per case).
fn engine_only(demo: &[CaseInput], n: usize, threads: usize, process: bool) -> f64 {
    let t0 = Instant::now();
    let defaults = thermosieve_model::Conditions::default();
    std::thread::scope(|s| {
        for t in 0..threads {
            let defaults = &defaults;
            s.spawn(move || {
                let mut screener = Screener::new(species::bundled(), TemperatureGrid::default_process());
                let mut ok = 0usize;
                // The same reactions and conditions as the end-to-end run; the ids the
                // repeats get there do not reach the engine, so no copies are made here.
                for c in (t..n).step_by(threads).map(|i| &demo[i % demo.len()]) {
                    let Ok(screened) = screener.screen(&c.reaction) else { continue };
                    ok += 1;
                    if process {
                        let conditions = thermosieve_worker::rows::process_conditions(&c.conditions.or_defaults(defaults));
                        ok += usize::from(thermosieve_engine::process::evaluate(&screened, &conditions).is_ok());
                    }
                }
                std::hint::black_box(ok);
            });
        }
    });
    n as f64 / t0.elapsed().as_secs_f64()
}

/// One worker thread's steps per chunk, timed: what a chunk costs besides the engine.
fn stages(demo: &[CaseInput], n: usize, chunk_size: usize) -> anyhow::Result<()> {
    use thermosieve_worker::{parts, process::ChunkProcessor, rows};
    let dir = std::env::temp_dir().join(format!("thermosieve-stages-{}", std::process::id()));
    std::fs::create_dir_all(&dir)?;
    let spec = thermosieve_model::BatchSpec {
        batch_id: "0".repeat(32),
        temperatures_k: TemperatureGrid::default_process().temperatures_k().to_vec(),
        default_conditions: thermosieve_model::Conditions::default(),
        chunk_size,
        label: "stages".into(),
        created_unix_ms: 0,
        tenant: String::new(),
    };
    let all: Vec<CaseInput> = cases(demo, n).collect();
    let mut processor = ChunkProcessor::new();
    let mut t = [0f64; 8];
    let names = [
        "screen + process view + rows",
        "cases frame",
        "trends frame",
        "routes roll-up + frame",
        "write cases part",
        "write trends part",
        "write routes part",
        "species frame + part",
    ];
    let mut chunks = 0;
    for (seq, chunk) in all.chunks(chunk_size).enumerate() {
        let mut lap = Instant::now();
        let mut mark = |i: usize| {
            t[i] += lap.elapsed().as_secs_f64();
            lap = Instant::now();
        };
        let case_rows = processor.screen_cases(&spec, chunk);
        mark(0);
        let cases_df = rows::cases_frame(&case_rows)?;
        mark(1);
        let trends_df = rows::trends_frame(&case_rows)?;
        mark(2);
        let routes_df = rows::routes_frame(&rows::chunk_routes(&case_rows))?;
        mark(3);
        let seq = seq as u64;
        parts::write_part(&thermosieve_model::part_path(&dir, &spec.batch_id, Table::Cases, seq)?, &cases_df)?;
        mark(4);
        parts::write_part(&thermosieve_model::part_path(&dir, &spec.batch_id, Table::Trends, seq)?, &trends_df)?;
        mark(5);
        parts::write_part(&thermosieve_model::part_path(&dir, &spec.batch_id, Table::Routes, seq)?, &routes_df)?;
        mark(6);
        parts::write_part(
            &thermosieve_model::part_path(&dir, &spec.batch_id, Table::Species, seq)?,
            &rows::species_frame(&case_rows)?,
        )?;
        mark(7);
        chunks += 1;
    }
    let total: f64 = t.iter().sum();
    println!(
        "{n} cases in {chunks} chunks of {chunk_size}, one thread: {:.0} cases/s",
        n as f64 / total
    );
    for (name, s) in names.iter().zip(t) {
        println!(
            "  {name:<30} {:>7.2} ms per chunk ({:>4.1} %)",
            s * 1e3 / chunks as f64,
            100.0 * s / total
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
    Ok(())
}

/// What the embedded run measured.
struct EmbeddedFigures {
    /// Embedded cases/s over the engine's with the process view, same threads (target 1).
    ratio: f64,
    /// Peak RSS of this process, MB (target 5).
    rss_mb: u64,
}

/// The embedded run against the engine alone, same threads, same process: the ratio the
/// pipeline keeps of the engine's rate.
async fn embedded(demo: &[CaseInput], n: usize, threads: usize, chunk_size: usize) -> anyhow::Result<EmbeddedFigures> {
    let dir = std::env::temp_dir().join(format!("thermosieve-embedded-{}", std::process::id()));
    std::fs::create_dir_all(&dir)?;
    let ticks = clock_ticks_per_second();
    let cpu0 = cpu_seconds("self", ticks);
    let t0 = Instant::now();
    let options = thermosieve_front::ingest::BatchOptions {
        label: "bench embedded".into(),
        chunk_size,
        ..Default::default()
    };
    let out = thermosieve_cli::embedded::run_cases(cases(demo, n), options, &dir, threads).await?;
    let run_s = t0.elapsed().as_secs_f64();
    let run_cpu = cpu_seconds("self", ticks) - cpu0;
    let rss_mb = vm_hwm_kb(std::process::id()) / 1024;
    let manifest: serde_json::Value = serde_json::from_slice(&std::fs::read(out.batch_dir.join("manifest.json"))?)?;
    let finalize_s = manifest["timings"]["finalize_seconds"].as_f64().unwrap_or(f64::NAN);
    let bytes: u64 = manifest["files"]
        .as_array()
        .map(|f| f.iter().filter_map(|e| e["bytes"].as_u64()).sum())
        .unwrap_or(0);
    let _ = std::fs::remove_dir_all(&dir);
    let cpu1 = cpu_seconds("self", ticks);
    let engine_rate = engine_only(demo, n, threads, true);
    let engine_cpu = cpu_seconds("self", ticks) - cpu1;
    let run_rate = n as f64 / run_s;
    println!(
        "embedded run: {n} cases ({} errors), {threads} engine threads on {} cores",
        out.progress.cases_error,
        std::thread::available_parallelism().map_or(1, |c| c.get())
    );
    println!(
        "  {run_s:.2} s, {run_rate:.0} cases/s, {run_cpu:.1} CPU s, finalizer {finalize_s:.2} s, tables {:.1} MB",
        bytes as f64 / 1e6
    );
    println!("  peak RSS (VmHWM, this process): {rss_mb} MB");
    println!("engine with the process view, {threads} threads: {engine_rate:.0} cases/s, {engine_cpu:.1} CPU s");
    println!("ratio embedded / engine: {:.2} (target >= 0.50)", run_rate / engine_rate);
    Ok(EmbeddedFigures {
        ratio: run_rate / engine_rate,
        rss_mb,
    })
}

/// What the service run measured.
struct ServiceFigures {
    /// CPU seconds of all workers over the engine's for the same cases (target 2).
    worker_cpu_ratio: f64,
    /// Wall seconds × cores over the CPU seconds of every process (target 3).
    idle_ratio: f64,
    front_mb: u64,
    workers_mb: Vec<u64>,
}

/// Median wall milliseconds of `runs` runs of `bin` with `args` (each after `before`).
fn median_ms(bin: &Path, args: &[&OsStr], runs: usize, before: impl Fn()) -> anyhow::Result<f64> {
    let mut ms = Vec::with_capacity(runs);
    for _ in 0..runs {
        before();
        let t0 = Instant::now();
        let out = Command::new(bin).args(args).stdout(Stdio::null()).stderr(Stdio::piped()).output()?;
        ms.push(t0.elapsed().as_secs_f64() * 1e3);
        if !out.status.success() {
            bail!(
                "{} {:?} failed ({}): {}",
                bin.display(),
                args,
                out.status,
                String::from_utf8_lossy(&out.stderr)
            );
        }
    }
    ms.sort_by(f64::total_cmp);
    Ok(ms[runs / 2])
}

/// Target 4: the median wall time of a one-case `run` (the input's first row; the file cache
/// warm after the first run) and of an `eval` of a formula reaction, 15 runs each.
fn fixed_costs(bin: &Path, input: &Path) -> anyhow::Result<(f64, f64)> {
    let dir = std::env::temp_dir().join(format!("thermosieve-fixed-{}", std::process::id()));
    std::fs::create_dir_all(&dir)?;
    let text = std::fs::read_to_string(input).with_context(|| format!("reading {}", input.display()))?;
    let one = dir.join(input.file_name().context("input file name")?);
    std::fs::write(&one, text.lines().take(2).map(|l| format!("{l}\n")).collect::<String>())?;
    let out = dir.join("out");
    let run_args = [OsStr::new("run"), one.as_os_str(), OsStr::new("--out"), out.as_os_str()];
    let run = median_ms(bin, &run_args, 15, || drop(std::fs::remove_dir_all(&out)))?;
    let eval_args = [OsStr::new("eval"), OsStr::new("CH4 + 2 O2 -> CO2 + 2 H2O")];
    let eval = median_ms(bin, &eval_args, 15, || ())?;
    let _ = std::fs::remove_dir_all(&dir);
    Ok((run, eval))
}

#[tokio::main]
async fn main() -> anyhow::Result<()> {
    let a = Args::parse();
    if a.stages {
        let demo: Vec<CaseInput> = input::open(&a.input, None)?.collect();
        let size = if a.chunk_size == 0 { 2000 } else { a.chunk_size as usize };
        return stages(&demo, a.cases, size);
    }
    if a.embedded {
        let demo: Vec<CaseInput> = input::open(&a.input, None)?.collect();
        let threads = a
            .threads
            .unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()));
        embedded(&demo, a.cases, threads, a.chunk_size as usize).await?;
        return Ok(());
    }
    let bin = thermosieve_binary(a.thermosieve.clone())?;
    let demo: Vec<CaseInput> = input::open(&a.input, None)?.collect();
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    let embedded = embedded(&demo, a.cases, threads, a.chunk_size as usize).await?;
    let service = service(&bin, &demo, &a).await?;
    let (run_ms, eval_ms) = fixed_costs(&bin, &a.input)?;
    let binary_mb = std::fs::metadata(&bin)?.len() as f64 / 1e6;
    let met = |ok: bool| if ok { "met" } else { "not met" };
    println!();
    println!("targets, {} cases, {threads} cores:", a.cases);
    println!(
        "  1. embedded / engine                {:>6.2}   (>= 0.50)  {}",
        embedded.ratio,
        met(embedded.ratio >= 0.5)
    );
    println!(
        "  2. worker CPU / engine CPU          {:>6.2}x  (<= 1.5x)  {}",
        service.worker_cpu_ratio,
        met(service.worker_cpu_ratio <= 1.5)
    );
    println!(
        "  3. wall x cores / CPU of all        {:>6.2}   (<= 1.25)  {}",
        service.idle_ratio,
        met(service.idle_ratio <= 1.25)
    );
    println!(
        "  4. one-case run {run_ms:.0} ms (< 50), eval {eval_ms:.0} ms (< 20)  {}",
        met(run_ms < 50.0 && eval_ms < 20.0)
    );
    let peak = embedded
        .rss_mb
        .max(service.front_mb)
        .max(service.workers_mb.iter().copied().max().unwrap_or(0));
    println!(
        "  5. peak RSS: embedded {} MB, front {} MB, workers {:?} MB (< 300; flat: compare with --cases 5000000)  {}",
        embedded.rss_mb,
        service.front_mb,
        service.workers_mb,
        met(peak < 300)
    );
    println!("  6. binary {binary_mb:.1} MB (<= 60)  {}", met(binary_mb <= 60.0));
    Ok(())
}

/// The thermosieve binary the service run starts.
fn thermosieve_binary(given: Option<PathBuf>) -> anyhow::Result<PathBuf> {
    let bin = match given {
        Some(b) => b,
        None => std::env::current_exe()?.parent().context("exe dir")?.join("thermosieve"),
    };
    if !bin.exists() {
        bail!(
            "{} not found: build it with cargo build --release -p thermosieve-cli",
            bin.display()
        );
    }
    Ok(bin)
}

/// N cases through a front, redis-server and the workers, against the engine alone.
async fn service(bin: &Path, demo: &[CaseInput], a: &Args) -> anyhow::Result<ServiceFigures> {
    let ticks = clock_ticks_per_second();
    let dir = std::env::temp_dir().join(format!("thermosieve-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir)?;
    let rport = free_port()?;
    let redis = Proc(
        Command::new("redis-server")
            .args([
                "--port",
                &rport.to_string(),
                "--bind",
                "127.0.0.1",
                "--save",
                "",
                "--appendonly",
                "no",
                "--dir",
            ])
            .arg(&dir)
            .stdout(Stdio::null())
            .spawn()
            .context("redis-server (apt-get install -y redis-server)")?,
    );
    tokio::time::sleep(Duration::from_millis(300)).await;
    let fport = free_port()?;
    let env = [
        ("THERMOSIEVE_REDIS_URL", format!("redis://127.0.0.1:{rport}/")),
        ("THERMOSIEVE_RESULTS_DIR", dir.join("results").display().to_string()),
        ("THERMOSIEVE_LOG", "warn".into()),
    ];
    let front = Proc(
        Command::new(bin)
            .args(["serve", "--listen", &format!("127.0.0.1:{fport}")])
            .envs(env.clone())
            .stdout(Stdio::null())
            .spawn()?,
    );
    let mut workers = Vec::new();
    for w in 0..a.workers {
        workers.push(Proc(
            Command::new(bin)
                .args(["work", "--threads", "1", "--consumer", &format!("bench-{w}")])
                .envs(env.clone())
                .stdout(Stdio::null())
                .spawn()?,
        ));
    }
    let url = format!("http://127.0.0.1:{fport}");
    let mut client = loop {
        match ScreeningClient::connect(url.clone()).await {
            Ok(c) => break c,
            Err(_) => tokio::time::sleep(Duration::from_millis(100)).await,
        }
    };
    // CPU from here on, as the wall time: not the processes' start-up (a worker parses its
    // tables as it starts), nor this process's embedded run before.
    let cpu = |pid: u32| cpu_seconds(&pid.to_string(), ticks);
    let start_cpu = |p: &Proc| cpu(p.0.id());
    let (front0, redis0, cpu_self0) = (start_cpu(&front), start_cpu(&redis), cpu_seconds("self", ticks));
    let workers0: Vec<f64> = workers.iter().map(start_cpu).collect();
    let t0 = Instant::now();
    let (tx, rx) = tokio::sync::mpsc::channel(1024);
    let n = a.cases;
    let demo2 = demo.to_vec();
    let chunk_size = a.chunk_size;
    let feeder = tokio::task::spawn_blocking(move || {
        let _ = tx.blocking_send(pb::SubmitBatchRequest {
            item: Some(pb::submit_batch_request::Item::Header(pb::BatchHeader {
                label: "bench".into(),
                chunk_size,
                ..Default::default()
            })),
        });
        for message in thermosieve_cli::submit::case_messages(cases(&demo2, n)) {
            if tx.blocking_send(message).is_err() {
                break;
            }
        }
    });
    let id = client
        .submit_batch(tokio_stream::wrappers::ReceiverStream::new(rx))
        .await?
        .into_inner()
        .batch_id;
    feeder.await?;
    let submitted = t0.elapsed().as_secs_f64();
    let mut watch = client
        .watch_batch(pb::WatchBatchRequest { batch_id: id.clone() })
        .await?
        .into_inner();
    let mut last = None;
    while let Some(s) = watch.message().await? {
        last = Some(s);
    }
    let e2e_s = t0.elapsed().as_secs_f64();
    let last = last.context("no status")?;
    if last.state != pb::BatchState::Done as i32 {
        bail!("batch ended in state {}: {}", last.state, last.message);
    }
    let manifest: serde_json::Value = serde_json::from_slice(&std::fs::read(dir.join("results").join(&id).join("manifest.json"))?)?;
    let finalize_s = manifest["timings"]["finalize_seconds"].as_f64().unwrap_or(f64::NAN);
    let (cpu_front, cpu_redis, cpu_client) = (
        start_cpu(&front) - front0,
        start_cpu(&redis) - redis0,
        cpu_seconds("self", ticks) - cpu_self0,
    );
    let cpu_workers: Vec<f64> = workers.iter().zip(&workers0).map(|(w, c0)| start_cpu(w) - c0).collect();
    let front_kb = vm_hwm_kb(front.0.id());
    let worker_kb: Vec<u64> = workers.iter().map(|w| vm_hwm_kb(w.0.id())).collect();
    let e2e_rate = n as f64 / e2e_s;
    drop(workers);
    drop(front);
    drop(redis);
    let engine_rate = engine_only(demo, n, a.workers, false);
    let cpu_engine0 = cpu_seconds("self", ticks);
    let engine_process_rate = engine_only(demo, n, a.workers, true);
    // Measured, not wall time × threads: threads that end unevenly would flatter the ratio.
    let engine_cpu = cpu_seconds("self", ticks) - cpu_engine0;
    println!("cases: {n} ({} errors), workers: {} x 1 thread", last.cases_error, a.workers);
    println!("submit stream finished after {submitted:.1} s");
    println!("end to end: {e2e_s:.1} s, {e2e_rate:.0} cases/s (front + redis + workers + parquet, finalize included)");
    println!("  of which the finalizer (one worker, after the last chunk): {finalize_s:.1} s");
    println!("engine only ({} threads): {engine_rate:.0} cases/s", a.workers);
    println!(
        "engine with the process view ({} threads): {engine_process_rate:.0} cases/s",
        a.workers
    );
    println!(
        "ratio e2e / engine: {:.2} (screening only), {:.2} (with the process view)",
        e2e_rate / engine_rate,
        e2e_rate / engine_process_rate
    );
    println!(
        "CPU seconds: client (this bench: makes and sends the cases) {cpu_client:.1}, front {cpu_front:.1}, redis {cpu_redis:.1}, workers {:?} (of {:.1} wall s x cores)",
        cpu_workers.iter().map(|c| (c * 10.0).round() / 10.0).collect::<Vec<_>>(),
        e2e_s
    );
    println!(
        "engine CPU seconds for these cases (engine with the process view, {} threads): {engine_cpu:.1}",
        a.workers
    );
    let workers_mb: Vec<u64> = worker_kb.iter().map(|k| k / 1024).collect();
    println!("peak RSS (VmHWM): front {} MB, workers {workers_mb:?} MB", front_kb / 1024);
    let _ = std::fs::remove_dir_all(&dir);
    let cores = std::thread::available_parallelism().map_or(1, |c| c.get()) as f64;
    let worker_cpu: f64 = cpu_workers.iter().sum();
    Ok(ServiceFigures {
        worker_cpu_ratio: worker_cpu / engine_cpu,
        idle_ratio: e2e_s * cores / (cpu_client + cpu_front + cpu_redis + worker_cpu),
        front_mb: front_kb / 1024,
        workers_mb,
    })
}
