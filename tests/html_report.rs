//! The HTML report: rendered by the binary, loaded in a real (headless) browser, and kept
//! small for long paths.
//!
//! The browser is Debian's `chromium` (`.ci/run` installs it and sets
//! `ARMPATH_BROWSER_TESTS=1`). On a machine without it the browser tests print one line,
//! `skipped: chromium not found`, and pass; with `ARMPATH_BROWSER_TESTS=1` a missing browser
//! fails them. `ARMPATH_CHROMIUM` names the browser binary when it is not `chromium` or
//! `chromium-browser` on `PATH`.

mod common;
use armpath::check::{check, CheckOptions};
use armpath::job::{self, Motion, Overrides};
use armpath::report::html::{render_html, PlotData, BUCKETS, SLIDER_POSES, TRACE_POINTS};
use armpath::report::Report;
use armpath::robot::{load_urdf, MAX_DOF};
use armpath::solve::{Reach, SampleRecord, SampleSink};
use assert_cmd::Command;
use common::repo;
use nalgebra::{Isometry3, Translation3, UnitQuaternion};
use std::path::{Path, PathBuf};
use std::process::{Output, Stdio};
use std::time::{Duration, Instant};

/// Hang guard for the browser process, not a speed test: a headless load of the demo page
/// takes 1–2 s on the project's 2-core machines; a browser still running after this has hung.
/// source: common practice (a generous multiple of the measured time)
const BROWSER_TIMEOUT: Duration = Duration::from_secs(60);

/// Set to `1` to make a missing browser fail the browser tests instead of skipping them.
const REQUIRE_BROWSER: &str = "ARMPATH_BROWSER_TESTS";
/// Path of the browser binary, overriding the search on `PATH`.
const BROWSER_OVERRIDE: &str = "ARMPATH_CHROMIUM";

/// The browser binary: `ARMPATH_CHROMIUM` when set, else `chromium` or `chromium-browser`
/// on `PATH`.
fn find_chromium() -> Option<PathBuf> {
    if let Some(p) = std::env::var_os(BROWSER_OVERRIDE) {
        let p = PathBuf::from(p);
        return p.is_file().then_some(p);
    }
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path)
        .flat_map(|dir| ["chromium", "chromium-browser"].map(|n| dir.join(n)))
        .find(|p| p.is_file())
}

/// The browser, or `None` after one line saying the test is skipped. With
/// `ARMPATH_BROWSER_TESTS=1` a missing browser fails the test.
fn chromium_or_skip() -> Option<PathBuf> {
    let found = find_chromium();
    if found.is_none() {
        if std::env::var(REQUIRE_BROWSER).as_deref() == Ok("1") {
            panic!(
                "chromium is not installed but {REQUIRE_BROWSER}=1 asks for the browser tests: \
                 install Debian's package (apt-get install chromium; .ci/run does this), or set \
                 {BROWSER_OVERRIDE} to the browser binary, and rerun."
            );
        }
        // Written past the test harness's capture so that the skip shows in the log.
        use std::io::Write;
        let _ = writeln!(std::io::stderr().lock(), "skipped: chromium not found");
    }
    found
}

/// Run headless chromium on `page` with `extra` arguments; kill it after the timeout. Its
/// output goes to files beside the profile (a full pipe would stall the browser).
fn browse(browser: &Path, page: &Path, profile: &Path, extra: &[&str]) -> Output {
    browse_at(browser, page, "", profile, extra)
}

/// As [`browse`], the page opened at the URL fragment `hash` (`#…` or empty).
fn browse_at(browser: &Path, page: &Path, hash: &str, profile: &Path, extra: &[&str]) -> Output {
    std::fs::create_dir_all(profile).unwrap();
    let out_path = profile.with_extension("stdout");
    let err_path = profile.with_extension("stderr");
    let mut child = std::process::Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--no-first-run",
            "--hide-scrollbars",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .args(extra)
        .arg(format!("file://{}{hash}", page.display()))
        .stdin(Stdio::null())
        .stdout(std::fs::File::create(&out_path).unwrap())
        .stderr(std::fs::File::create(&err_path).unwrap())
        .spawn()
        .expect("chromium could not be started");
    let start = Instant::now();
    let read = |p: &Path| std::fs::read(p).unwrap_or_default();
    loop {
        match child.try_wait().expect("waiting for chromium") {
            Some(status) => {
                return Output {
                    status,
                    stdout: read(&out_path),
                    stderr: read(&err_path),
                }
            }
            None if start.elapsed() > BROWSER_TIMEOUT => {
                let _ = child.kill();
                let _ = child.wait();
                panic!(
                    "chromium did not finish within {BROWSER_TIMEOUT:?}; stderr:\n{}",
                    String::from_utf8_lossy(&read(&err_path))
                );
            }
            None => std::thread::sleep(Duration::from_millis(50)),
        }
    }
}

/// Console messages of the page (chromium logs them as `...:CONSOLE...` lines with
/// `--enable-logging=stderr`): a page whose script runs cleanly and that loads nothing from
/// outside has none.
fn console_lines(stderr: &[u8]) -> Vec<String> {
    String::from_utf8_lossy(stderr)
        .lines()
        .filter(|l| l.contains(":CONSOLE") || l.contains("Uncaught"))
        .map(str::to_string)
        .collect()
}

/// Decode a PNG: (width, height, RGB pixels).
fn decode_png(path: &Path) -> (u32, u32, Vec<[u8; 3]>) {
    let file = std::io::BufReader::new(std::fs::File::open(path).expect("screenshot exists"));
    let mut decoder = png::Decoder::new(file);
    decoder.set_transformations(png::Transformations::EXPAND | png::Transformations::STRIP_16);
    let mut reader = decoder.read_info().expect("a PNG header");
    let mut buf = vec![0; reader.output_buffer_size().expect("a frame size")];
    let info = reader.next_frame(&mut buf).expect("a PNG frame");
    let n = info.color_type.samples();
    let mut px = Vec::with_capacity((info.width * info.height) as usize);
    for row in buf.chunks(info.line_size).take(info.height as usize) {
        for p in row.chunks(n).take(info.width as usize) {
            px.push(if n >= 3 {
                [p[0], p[1], p[2]]
            } else {
                [p[0], p[0], p[0]]
            });
        }
    }
    (info.width, info.height, px)
}

#[test]
fn the_demo_report_loads_in_a_browser_and_is_not_blank() {
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("report.html");
    let out = Command::cargo_bin("armpath")
        .unwrap()
        .arg("check")
        .arg(repo("paths/wrist_crossing.yaml"))
        .arg("--html")
        .arg(&page)
        .arg("-q")
        .output()
        .unwrap();
    // source: paths/wrist_crossing.yaml header (expected result: fail, exit code 1)
    assert_eq!(
        out.status.code(),
        Some(1),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(html.starts_with("<!DOCTYPE html>"));
    // Self-contained: no outside scripts, stylesheets, images or fonts; the one script (the
    // pose slider) and its data are inline.
    // source: common practice (the only URL allowed is the SVG namespace name)
    for banned in ["<link", "<img", "<iframe", "@import", "url(", "src="] {
        assert!(!html.contains(banned), "the page contains {banned}");
    }
    assert_eq!(
        html.matches("<script").count(),
        2,
        "one data block, one script"
    );
    assert!(html.contains("<script type=\"application/json\" id=\"pose-data\">"));
    let urls = html.matches("http").count();
    let namespaces = html.matches("http://www.w3.org/2000/svg").count();
    assert_eq!(
        urls, namespaces,
        "the page refers to something outside itself"
    );
    // Every finding row is linked to a marker that exists on a plot.
    // source: paths/wrist_crossing.yaml header (singularity warning, joint speed j4 and j6)
    for kind in ["singularity", "joint_speed"] {
        assert!(html.contains(&format!("<b>{kind}</b>")), "no {kind} row");
    }
    let mut n = 1;
    while html.contains(&format!("id=\"finding-{n}\"")) {
        assert!(
            html.contains(&format!("href=\"#pin-{n}\""))
                && html.contains(&format!("id=\"pin-{n}\"")),
            "finding {n} has no linked marker"
        );
        n += 1;
    }
    assert!(n > 3, "only {} findings", n - 1);

    // 1. The DOM as the browser built it, and its console.
    let Some(browser) = chromium_or_skip() else {
        return;
    };
    let profile = dir.path().join("profile");
    let dom = browse(
        &browser,
        &page,
        &profile,
        &["--enable-logging=stderr", "--v=0", "--dump-dom"],
    );
    let console = console_lines(&dom.stderr);
    assert!(
        console.is_empty(),
        "console messages:\n{}",
        console.join("\n")
    );
    let dom_text = String::from_utf8_lossy(&dom.stdout);
    assert!(
        dom_text.contains("id=\"verdict\">▲ FAIL"),
        "the loaded page shows no FAIL verdict:\n{}",
        &dom_text[..dom_text.len().min(2000)]
    );
    assert!(dom_text.matches("<svg").count() >= 10, "plots missing");

    // 2. A screenshot that shows something.
    let shot = dir.path().join("shot.png");
    let run = browse(
        &browser,
        &page,
        &profile,
        &[
            &format!("--screenshot={}", shot.display()),
            "--window-size=1280,2400",
        ],
    );
    assert!(
        shot.exists(),
        "no screenshot; stderr:\n{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let (w, h, px) = decode_png(&shot);
    assert_eq!((w, h), (1280, 2400));
    let non_white = px.iter().filter(|p| p.iter().any(|&c| c < 235)).count();
    let fraction = non_white as f64 / px.len() as f64;
    // source: common practice (text, tables and plots cover a few per cent of a page; a
    // blank or unstyled failure page covers almost none)
    assert!(
        fraction > 0.03,
        "only {:.2} % of the page is not white",
        fraction * 100.0
    );
    let mut colours: Vec<[u8; 3]> = px.iter().step_by(7).copied().collect();
    colours.sort_unstable();
    colours.dedup();
    assert!(colours.len() > 20, "{} colours", colours.len());
    // The error colour (Okabe–Ito vermillion, #D55E00) of the markers shows.
    let vermillion = px
        .iter()
        .filter(|p| p[0] > 190 && (70..120).contains(&p[1]) && p[2] < 40)
        .count();
    assert!(vermillion > 20, "{vermillion} vermillion pixels");
}

#[test]
fn the_console_check_catches_a_broken_page() {
    // The browser check above must be able to fail: a page with a script error logs to the
    // console, and a blank page is white.
    // source: common practice (a test of the test)
    let Some(browser) = chromium_or_skip() else {
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("broken.html");
    std::fs::write(
        &page,
        "<!DOCTYPE html><html><body><script>notDefinedAnywhere();</script></body></html>",
    )
    .unwrap();
    let profile = dir.path().join("profile");
    let run = browse(
        &browser,
        &page,
        &profile,
        &["--enable-logging=stderr", "--v=0", "--dump-dom"],
    );
    assert!(
        !console_lines(&run.stderr).is_empty(),
        "no console line for a script error; stderr:\n{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let shot = dir.path().join("shot.png");
    browse(
        &browser,
        &page,
        &profile,
        &[
            &format!("--screenshot={}", shot.display()),
            "--window-size=400,300",
        ],
    );
    let (_, _, px) = decode_png(&shot);
    assert!(px.iter().all(|p| p.iter().all(|&c| c > 235)), "not blank");
}

/// A synthetic stream of `n` samples: a raster of 100 mm lines 2 mm apart at 0.1 mm steps,
/// smooth joint motion with one spike on joint 1 at sample `spike`.
fn feed(sink: &mut dyn SampleSink, robot: &armpath::robot::Robot, n: usize, spike: usize) {
    let per_line = 1000;
    let rot = UnitQuaternion::identity();
    let dof = robot.dof();
    for i in 0..n {
        let (line, k) = (i / per_line, i % per_line);
        let u = k as f64 * 1e-4;
        let x = 0.9 + if line % 2 == 0 { u } else { 0.1 - u };
        let y = -0.5 + (line % 500) as f64 * 2e-3;
        let mut joints = [0.0; MAX_DOF];
        let mut speed = [0.0; MAX_DOF];
        for (j, q) in joints.iter_mut().enumerate().take(dof) {
            *q = 0.3 * ((i as f64) * 1e-4 + j as f64).sin();
            speed[j] = 0.3 * 1e-4 / 1e-3 * ((i as f64) * 1e-4 + j as f64).cos();
        }
        if i == spike {
            joints[0] = 1.5;
        }
        let rec = SampleRecord {
            index: i,
            segment: line,
            waypoint: (k == 0).then_some(line.min(1)),
            motion: Motion::Linear,
            s: i as f64 * 1e-4,
            t: i as f64 * 1e-3,
            dt: 1e-3,
            target: Isometry3::from_parts(Translation3::new(x, y, 0.8), rot),
            reach: if (700_000..700_050).contains(&i) {
                Reach::Unreachable
            } else {
                Reach::Reached
            },
            position_error: 0.0,
            orientation_error: 0.0,
            joints: armpath::Joints::from(joints),
            joint_speed: armpath::Joints::from(speed),
            joint_acceleration: armpath::Joints::zeros(joints.len()),
            tcp_speed: 0.1,
            tool_angular_speed: 0.2,
            singularity: 0.05 + 0.04 * ((i as f64) * 3e-5).sin(),
            singularity_class: None,
            jump: None,
        };
        sink.sample(robot, &rec);
    }
}

#[test]
fn a_page_without_samples_still_renders() {
    // source: common practice (the renderer must not depend on the walk having run)
    let job = job::load(&repo("paths/bracket_fillet.yaml"), &Overrides::default()).unwrap();
    let robot = load_urdf(&job.robot, job.tip.as_deref()).unwrap();
    let outcome = check(&job, &robot, &CheckOptions::default(), &mut []).unwrap();
    let report = Report::from_outcome(&outcome).unwrap();
    let page = render_html(&report, &PlotData::new(&job));
    assert!(page.contains("id=\"verdict\">✓ PASS"));
    assert!(page.ends_with("</html>\n"));
}

#[test]
fn a_million_samples_make_a_light_page() {
    let job = job::load(&repo("paths/wrist_crossing.yaml"), &Overrides::default()).unwrap();
    let robot = load_urdf(&job.robot, job.tip.as_deref()).unwrap();
    let outcome = check(&job, &robot, &CheckOptions::default(), &mut []).unwrap();
    let report = Report::from_outcome(&outcome).unwrap();
    let n = 1_000_000;
    let spike = 654_321;
    let mut data = PlotData::new(&job);
    feed(&mut data, &robot, n, spike);
    let page = render_html(&report, &data);
    // Bounded memory and bounded drawing work: the buckets and the trace never exceed their
    // caps, whatever the number of samples, and the figures are drawn from them alone.
    let env = data.envelope().unwrap();
    assert!(env.used() <= BUCKETS && env.used() >= BUCKETS / 2);
    assert!(data.trace().points().len() <= TRACE_POINTS + 1);
    assert!(data.poses().slider().len() <= SLIDER_POSES + 1);
    // The one-sample spike on j1 (1.5 rad = 85.94°) survives decimation.
    // source: 1.5 rad × 180/π = 85.9437° (arithmetic)
    let peak = env
        .buckets(data.position_series(0))
        .iter()
        .map(|b| b.hi)
        .fold(f64::MIN, f64::max);
    assert!((peak - 85.9437).abs() < 1e-3, "{peak}");
    // The unreachable stretch at samples 700,000–700,049 (s ≈ 70.0 m) is kept.
    let gaps = env.unreachable_stretches();
    assert!(
        gaps.iter().any(|g| g[0] <= 70.0 && g[1] >= 70.0049),
        "{gaps:?}"
    );
    // "Under a few MB".
    // source: common practice (a page that opens at once in a browser and mails easily)
    assert!(page.len() < 3_000_000, "{} bytes", page.len());
}

/// The page of a demo path (relative to the repository), written into `dir`.
fn demo_page(dir: &Path, path: &str) -> (PathBuf, String) {
    let page = dir.join("report.html");
    let out = Command::cargo_bin("armpath")
        .unwrap()
        .arg("check")
        .arg(repo(path))
        .arg("--html")
        .arg(&page)
        .arg("-q")
        .output()
        .unwrap();
    assert!(
        matches!(out.status.code(), Some(0 | 1)),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let html = std::fs::read_to_string(&page).unwrap();
    (page, html)
}

/// The id of the figure an element id stands in (the last `<figure id="…">` before it).
fn figure_of(html: &str, id: &str) -> Option<String> {
    let at = html.find(&format!("id=\"{id}\""))?;
    let start = html[..at].rfind("<figure id=\"")? + "<figure id=\"".len();
    let end = start + html[start..].find('"')?;
    Some(html[start..end].to_string())
}

#[test]
fn findings_link_to_the_plot_of_their_kind() {
    // source: the page's layout (figures.rs `Place`): timing findings on the plots over time,
    // clearance on the clearance plot, contacts on the arm views; paths/panel_raster.yaml
    // and paths/rib_weld_collides.yaml headers for the kinds they raise
    let expected = |kind: &str| match kind {
        "process_speed" => Some("time-tcp"),
        "joint_acceleration" => Some("time-acc"),
        "clearance" => Some("plot-clearance"),
        "collision" => Some("view-top"),
        "singularity" => Some("plot-singularity"),
        _ => None,
    };
    let mut seen = std::collections::BTreeSet::new();
    for path in ["paths/panel_raster.yaml", "paths/rib_weld_collides.yaml"] {
        let dir = tempfile::tempdir().unwrap();
        let (_, html) = demo_page(dir.path(), path);
        // source: robots/arm6.urdf (the robot of both paths)
        assert!(
            html.contains("robot armpath_arm6 · 6 joints · spherical wrist · armpath "),
            "{path}: header"
        );
        let cell = path.contains("rib_weld");
        assert_eq!(html.contains("<a href=\"#clearance\">Clearance</a>"), cell);
        assert_eq!(html.contains("<figure id=\"plot-clearance\">"), cell);
        let mut n = 1;
        while let Some(row_at) = html.find(&format!("<tr id=\"finding-{n}\">")) {
            let row = &html[row_at..row_at + html[row_at..].find("</tr>").unwrap()];
            let kind = row.split("<b>").nth(1).and_then(|r| r.split("</b>").next());
            let kind = kind.unwrap_or_default().to_string();
            assert!(
                row.contains(&format!("href=\"#pin-{n}\"")),
                "{path}: row {n} unlinked"
            );
            let fig = figure_of(&html, &format!("pin-{n}"));
            if let Some(want) = expected(&kind) {
                assert_eq!(fig.as_deref(), Some(want), "{path}: finding {n} ({kind})");
                seen.insert(kind);
            }
            n += 1;
        }
    }
    assert_eq!(
        seen.into_iter().collect::<Vec<_>>(),
        [
            "clearance",
            "collision",
            "joint_acceleration",
            "process_speed",
            "singularity"
        ]
    );
}

/// The `points` attribute of the slider arm on the top view in a DOM dump.
fn slider_points(dom: &str) -> String {
    let Some(at) = dom.find("id=\"slide-top\"") else {
        return String::new();
    };
    let tag = &dom[dom[..at].rfind('<').unwrap_or(0)..];
    let tag = &tag[..tag.find('>').unwrap_or(tag.len())];
    tag.split("points=\"")
        .nth(1)
        .and_then(|p| p.split('"').next())
        .unwrap_or_default()
        .to_string()
}

#[test]
fn the_pose_slider_moves_the_arm() {
    // source: common practice (a control must change what it controls). The page's script
    // reads `#pose=N` and sets the slider there before drawing, the same path as an input
    // event; the DOM is dumped after the script has run.
    let dir = tempfile::tempdir().unwrap();
    let (page, html) = demo_page(dir.path(), "paths/rib_weld.yaml");
    // Scripts off: the arm's static poses are there, the slider's arm is empty.
    assert!(html.contains("id=\"pose-ctl\" hidden"));
    assert_eq!(slider_points(&html), "");
    assert!(html.contains(">\nstart\n</text>") && html.contains(">\nend\n</text>"));
    let Some(browser) = chromium_or_skip() else {
        return;
    };
    let dump = |hash: &str, name: &str| {
        let run = browse_at(
            &browser,
            &page,
            hash,
            &dir.path().join(name),
            &["--enable-logging=stderr", "--v=0", "--dump-dom"],
        );
        let console = console_lines(&run.stderr);
        assert!(console.is_empty(), "console:\n{}", console.join("\n"));
        String::from_utf8_lossy(&run.stdout).into_owned()
    };
    let first = dump("", "p0");
    let later = dump("#pose=120", "p1");
    let (a, b) = (slider_points(&first), slider_points(&later));
    assert!(
        a.split(' ').count() >= 4,
        "no arm drawn at the first pose: {a:?}"
    );
    assert!(b.split(' ').count() >= 4, "no arm drawn at pose 120: {b:?}");
    assert_ne!(a, b, "the arm did not move");
    assert!(later.contains("pose 121 of "), "the pose is not named");
    assert!(
        !later.contains("id=\"pose-ctl\" hidden"),
        "the control stayed hidden"
    );
    // Past the end the slider stops at the last pose.
    let end = dump("#pose=99999", "p2");
    let last = slider_points(&end);
    assert!(!last.is_empty() && last != a);
}
