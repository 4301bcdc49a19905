//! `--threads`: the configuration table's walks split over threads give the report of one
//! thread, on every demo and on a long path; with two threads or more the main walk starts
//! before the table is complete and, where its first guess of the start is wrong, starts
//! over with the same outputs (report, joint CSV, HTML page) as one thread.

mod common;
use common::*;

/// The report without its timing (`seconds` differs from run to run).
fn untimed(mut v: serde_json::Value) -> serde_json::Value {
    fn strip(v: &mut serde_json::Value) {
        match v {
            serde_json::Value::Object(map) => {
                map.remove("seconds");
                map.values_mut().for_each(strip);
            }
            serde_json::Value::Array(items) => items.iter_mut().for_each(strip),
            _ => {}
        }
    }
    strip(&mut v);
    v
}

#[test]
fn reports_do_not_depend_on_the_thread_count() {
    // source: common practice (each configuration's walk is independent of the others, so
    // the split cannot change the table or anything chosen from it).
    let mut runs = Vec::new();
    for entry in std::fs::read_dir(repo("paths")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) == Some("yaml") {
            runs.push((path, vec![]));
        }
    }
    // A long path: the panel raster at a 0.25 mm step (about 13,000 samples).
    runs.push((repo("paths/panel_raster.yaml"), vec!["--step", "0.25"]));
    assert!(runs.len() >= 6);
    for (path, extra) in &runs {
        let with = |threads: &str| {
            let mut args = extra.clone();
            args.extend(["--threads", threads]);
            let (code, report) = check_json(path, &args);
            (code, untimed(report))
        };
        let one = with("1");
        // The arm has the closed form: the table of eight configurations is in the report.
        let rows = one.1["configurations"].as_array().map_or(0, Vec::len);
        assert_eq!(rows, 8, "{}", path.display());
        for threads in ["2", "3", "8"] {
            assert_eq!(
                with(threads),
                one,
                "{} {extra:?} --threads {threads}",
                path.display()
            );
        }
    }
}

/// The check of a demo through the library, on `threads` threads.
fn outcome(rel: &str, threads: usize) -> armpath::check::CheckOutcome {
    let job = armpath::job::load(&repo(rel), &armpath::job::Overrides::default()).unwrap();
    let robot = armpath::robot::load_urdf(&job.robot, job.tip.as_deref()).unwrap();
    let options = armpath::check::CheckOptions {
        threads,
        ..Default::default()
    };
    armpath::check::check(&job, &robot, &options, &mut []).unwrap()
}

/// The JSON report, joint CSV and HTML page of `armpath check FILE --threads N`.
fn outputs(path: &std::path::Path, threads: &str) -> (i32, serde_json::Value, Vec<u8>, Vec<u8>) {
    let dir = tempfile::tempdir().unwrap();
    let (csv, html) = (dir.path().join("joints.csv"), dir.path().join("page.html"));
    let (code, report) = check_json(
        path,
        &[
            "--threads",
            threads,
            "--joints",
            csv.to_str().unwrap(),
            "--html",
            html.to_str().unwrap(),
        ],
    );
    let read = |p: &std::path::Path| std::fs::read(p).unwrap();
    (code, untimed(report), read(&csv), read(&html))
}

#[test]
fn a_wrong_first_guess_is_walked_again_with_the_outputs_of_one_thread() {
    // source: common practice (the walk thrown away must leave no trace: every output of
    // two threads equals that of one, byte for byte). The demo is the case because of its
    // table, read below: front/up/noflip reaches the first pose with the better margin (it
    // is the choice before the table) but does not run the whole path; front/up/flip does
    // and is the final choice.
    let rel = "paths/rib_weld_collides.yaml";
    let one = outcome(rel, 1);
    let table = one.feasibility.as_deref().unwrap();
    let row = |name: &str| table.iter().find(|r| r.config.to_string() == name).unwrap();
    assert!(row("front/up/noflip").start_joints.is_some() && !row("front/up/noflip").runs());
    assert!(row("front/up/flip").runs());
    assert_eq!(
        one.start.config.map(|c| c.to_string()).as_deref(),
        Some("front/up/flip")
    );
    // One thread walks once, after the table; two walk the guess, then the final choice.
    assert_eq!(one.totals.discarded_walks, 0);
    let two = outcome(rel, 2);
    assert_eq!(two.totals.discarded_walks, 1);
    assert_eq!(two.start.config, one.start.config);
    assert_eq!(two.totals.samples, one.totals.samples);
    // A demo whose first guess is right is walked once on two threads too.
    assert_eq!(outcome("paths/rib_weld.yaml", 2).totals.discarded_walks, 0);

    let path = repo(rel);
    let single = outputs(&path, "1");
    assert_eq!(single.0, 1, "the demo has error findings");
    assert!(!single.2.is_empty() && !single.3.is_empty());
    assert!(
        outputs(&path, "2") == single,
        "--threads 2 differs from --threads 1"
    );
    // A CSV on standard output cannot be taken back: the check then waits for the table
    // before walking, and writes the same rows.
    let out = armpath()
        .arg("check")
        .arg(&path)
        .args(["--threads", "2", "--joints", "-", "-q"])
        .output()
        .unwrap();
    assert_eq!(out.stdout, single.2);
}
