//! `--threads`: the configuration table's walks split over threads give the report of one
//! thread, on every demo and on a long path.

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
