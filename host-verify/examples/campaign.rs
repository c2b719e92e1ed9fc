//! The long run of the hostile-input campaign (`fixsight_verify::campaign`):
//!
//! ```text
//! cargo run --release -p fixsight-verify --example campaign -- --cases 1000000 [--seed N] [--family NAME]
//! ```
//!
//! Runs every family (or one) with the given number of cases, prints one
//! line per family (cases, panics, wrong results, slow cases, typed
//! rejections, slowest case, time) and exits non-zero if anything was
//! found. A case that runs for more than a minute stops the run with its
//! family, seed and case index (a hang).
use fixsight_verify::campaign::{run_family, Inputs, FAMILIES};
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let arg = |name: &str| {
        args.iter()
            .position(|a| a == name)
            .and_then(|i| args.get(i + 1))
            .cloned()
    };
    let cases: u64 = arg("--cases").map_or(100_000, |v| v.parse().expect("--cases N"));
    let seed: u64 = arg("--seed").map_or(2026, |v| v.parse().expect("--seed N"));
    let only = arg("--family");
    let golden = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../golden");
    let inputs = Inputs::load(&golden);
    std::panic::set_hook(Box::new(|_| {}));
    // Hang watchdog: the case counter must move at least once a minute.
    let tick = Arc::new(AtomicU64::new(0));
    let current = Arc::new(std::sync::Mutex::new(String::new()));
    {
        let (tick, current) = (tick.clone(), current.clone());
        std::thread::spawn(move || {
            let mut last = u64::MAX;
            loop {
                std::thread::sleep(Duration::from_secs(60));
                let now = tick.load(Ordering::Relaxed);
                if now == last {
                    eprintln!(
                        "HANG: no case finished for 60 s ({}, seed {seed})",
                        current.lock().map(|s| s.clone()).unwrap_or_default()
                    );
                    std::process::exit(3);
                }
                last = now;
            }
        });
    }
    println!("campaign seed {seed}, {cases} cases per family");
    println!("| family | cases | panics | wrong | slow | typed rejections | slowest case | time |");
    println!("|---|---|---|---|---|---|---|---|");
    let mut found = false;
    for f in FAMILIES {
        if only.as_deref().is_some_and(|o| o != f) {
            continue;
        }
        let t0 = Instant::now();
        let (tk, cur) = (tick.clone(), current.clone());
        let bar = fixsight_verify::progress::bar(cases, f);
        let b = bar.clone();
        let t = run_family(f, seed, cases, &inputs, &move |i| {
            tk.fetch_add(1, Ordering::Relaxed);
            b.set_position(i + 1);
            if i % 1024 == 0 {
                if let Ok(mut c) = cur.lock() {
                    *c = format!("{f} near case {i}");
                }
            }
        });
        println!(
            "| `{}` | {} | {} | {} | {} | {} | {:.3} s | {:.0} s |",
            t.family,
            t.cases,
            t.panics,
            t.wrong,
            t.slow,
            t.rejected,
            t.slowest_s,
            t0.elapsed().as_secs_f64()
        );
        bar.finish_and_clear();
        for x in &t.findings {
            println!("  {x}");
        }
        found |= t.panics + t.wrong + t.slow > 0;
    }
    std::process::exit(i32::from(found));
}
