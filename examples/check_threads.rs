//! Wall time of the whole check on one thread and on two, in one process, on a path file
//! given as the first argument (e.g. the bench's seam written out), alternating the two
//! settings so that both see the same machine load:
//! `cargo run --release --example check_threads -- PATH [ROUNDS]`.

use armpath::check::{check, CheckOptions};
use armpath::job::{self, Overrides};
use armpath::robot::load_urdf;
use std::time::Instant;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let path = args.next().ok_or("usage: check_threads PATH [ROUNDS]")?;
    let rounds: usize = args.next().map_or(Ok(15), |r| r.parse())?;
    let job = job::load(std::path::Path::new(&path), &Overrides::default())?;
    let robot = load_urdf(&job.robot, job.tip.as_deref())?;
    let mut times = [Vec::new(), Vec::new()];
    for _ in 0..rounds {
        for (k, threads) in [1, 2].into_iter().enumerate() {
            let options = CheckOptions {
                threads,
                ..CheckOptions::default()
            };
            let t0 = Instant::now();
            let outcome = check(&job, &robot, &options, &mut [])?;
            times[k].push(t0.elapsed().as_secs_f64());
            std::hint::black_box(outcome.totals.samples);
        }
    }
    for (k, threads) in [1, 2].into_iter().enumerate() {
        let t = &mut times[k];
        t.sort_by(f64::total_cmp);
        println!(
            "{threads} thread(s): median {:.1} ms, fastest {:.1} ms over {rounds} checks",
            t[t.len() / 2] * 1e3,
            t[0] * 1e3
        );
    }
    Ok(())
}
