//! The pose slider: a range input above the views and one small inline script that redraws
//! the arm (its joint origins from the base to the TCP, one polyline per view) at the chosen
//! pose. The poses travel in the page as a JSON block of pixel point lists, one per view and
//! pose, with each pose's s and t. The control is hidden until the script shows it, so with
//! scripts off the page shows no dead control and the static poses stay as they are.
//!
//! A URL hash `#pose=N` starts the slider at pose N (0-based, clamped to the last pose): a
//! link can point at a place on the path, and a headless browser can be made to move it.

use super::figures::Figures;
use super::scene::Scene;
use std::fmt::Write;

/// The script. It reads `pose-data`, sets the points of `slide-top`, `slide-side` and
/// `slide-end`, and writes where the pose is into `pose-at`.
const SCRIPT: &str = r#"(function () {
  var d = JSON.parse(document.getElementById("pose-data").textContent);
  var range = document.getElementById("pose-range");
  var at = document.getElementById("pose-at");
  var n = d.s.length;
  function show(i) {
    ["top", "side", "end"].forEach(function (v) {
      var line = document.getElementById("slide-" + v);
      if (line && d[v] && d[v][i] !== undefined) line.setAttribute("points", d[v][i]);
    });
    at.textContent = "pose " + (i + 1) + " of " + n + ": s = " + d.s[i].toFixed(1) +
      " mm, t = " + d.t[i].toFixed(2) + " s";
  }
  var m = /pose=(\d+)/.exec(location.hash);
  if (m) range.value = String(Math.min(parseInt(m[1], 10), n - 1));
  range.addEventListener("input", function () { show(parseInt(range.value, 10)); });
  show(parseInt(range.value, 10));
  document.getElementById("pose-ctl").hidden = false;
})();"#;

/// The slider's control (hidden until the script runs); nothing without slider poses.
pub fn controls(o: &mut String, scene: &Scene) {
    let n = scene.slider_poses.len();
    if n == 0 {
        return;
    }
    let _ = write!(
        o,
        "<div class=\"slider\" id=\"pose-ctl\" hidden><label for=\"pose-range\">Arm along the \
         path (purple):</label><input type=\"range\" id=\"pose-range\" min=\"0\" max=\"{}\" \
         step=\"1\" value=\"0\"><output id=\"pose-at\" for=\"pose-range\"></output></div>",
        n - 1
    );
}

/// The pose data and the script; nothing when a view could not be drawn or there are no
/// slider poses.
pub fn script(o: &mut String, figs: &Figures) {
    let poses = &figs.scene.slider_poses;
    let Ok(views) = figs
        .views
        .iter()
        .map(|v| v.as_ref().map(|f| &f.slider))
        .collect::<Result<Vec<_>, _>>()
    else {
        return;
    };
    if poses.is_empty() || views.iter().any(|v| v.len() != poses.len()) {
        return;
    }
    o.push_str("<script type=\"application/json\" id=\"pose-data\">{\"s\":[");
    list(o, poses.iter().map(|p| p.s * 1e3), 1);
    o.push_str("],\"t\":[");
    list(o, poses.iter().map(|p| p.t), 3);
    o.push(']');
    for (tag, points) in ["top", "side", "end"].iter().zip(views) {
        let _ = write!(o, ",\"{tag}\":[");
        for (i, p) in points.iter().enumerate() {
            if i > 0 {
                o.push(',');
            }
            // Point lists hold digits, signs, commas and spaces only: nothing to escape.
            let _ = write!(o, "\"{p}\"");
        }
        o.push(']');
    }
    o.push_str("}</script>\n<script>");
    o.push_str(SCRIPT);
    o.push_str("</script>\n");
}

/// Finite numbers with `digits` decimals, comma-separated (JSON has no NaN: 0 instead).
fn list(o: &mut String, values: impl Iterator<Item = f64>, digits: usize) {
    for (i, v) in values.enumerate() {
        if i > 0 {
            o.push(',');
        }
        let v = if v.is_finite() { v } else { 0.0 };
        let _ = write!(o, "{v:.digits$}");
    }
}
