//! `foothold report` and `--plots` through the real binary, and the page as
//! a browser renders it: headless Chromium dumps the DOM and takes a
//! screenshot (skipped with a message when Chromium is absent, except in CI).

mod common;

use common::cli::{file_names, run, scratch};

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Writes the cooling demo's report (and plots) into `dir`.
fn cooling_report(dir: &Path) -> PathBuf {
    let html = dir.join("report.html");
    let plots = dir.join("plots");
    let (code, out, err) = run(&[
        "report",
        "demo-data/part_cooling.csv",
        "--model",
        "decay-to-floor",
        "--x",
        "minutes",
        "--y",
        "temp",
        "--start",
        "c=20,a=150,k=0.1",
        "--out",
        html.to_str().unwrap(),
        "--plots",
        plots.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.is_empty(), "the page went to the file");
    html
}

#[test]
fn report_holds_estimates_plots_and_caution() {
    let d = scratch("page");
    let html_path = cooling_report(&d);
    assert_eq!(
        file_names(&d),
        vec!["plots", "report.html"],
        "no temporary files"
    );
    assert_eq!(
        file_names(&d.join("plots")),
        vec!["fit.png", "fit.svg", "survey.png", "survey.svg"]
    );
    for f in ["fit.png", "survey.png"] {
        let bytes = std::fs::read(d.join("plots").join(f)).unwrap();
        assert!(
            bytes.starts_with(b"\x89PNG") && bytes.len() > 20_000,
            "{f}: {} bytes",
            bytes.len()
        );
    }
    let html = std::fs::read_to_string(&html_path).unwrap();
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert_eq!(
        html.matches("<svg").count(),
        2,
        "survey and fit sheets inline"
    );
    assert!(html.contains("<h2>Estimates</h2>") && html.contains("<h2>Features found</h2>"));
    assert!(html.contains("safety-critical"), "caution present");
    assert!(html.contains("c + a*exp(-k*minutes)"));
    assert!(html.contains("given on the command line (--start)"));
    // Demo data generated with k = 0.085 (demo-data/README.md): the page
    // shows the estimate 0.08533 (to 6 digits), near it.
    let k_row = html
        .lines()
        .find(|l| l.contains("<code>k</code>") && l.contains(" to "))
        .unwrap();
    let est: f64 = k_row
        .split("<td class=\"num\">")
        .nth(1)
        .and_then(|s| s.split('<').next())
        .and_then(|s| s.parse().ok())
        .unwrap();
    assert!((est - 0.085).abs() < 0.003, "{k_row}");
    let _ = std::fs::remove_dir_all(&d);
}

/// Writes the batch page of the plate demo (no starts) into `dir`.
fn plate_batch_report(dir: &Path) -> PathBuf {
    let html = dir.join("batch.html");
    let (code, out, err) = run(&[
        "report",
        "demo-data/plate_dose_response.csv",
        "--model",
        "logistic-3",
        "--x",
        "log_dose",
        "--y",
        "response",
        "--by",
        "compound",
        "--out",
        html.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.is_empty(), "the page went to the file");
    html
}

#[test]
fn batch_report_holds_the_table_the_overlay_and_the_caution() {
    let d = scratch("batch");
    let html_path = plate_batch_report(&d);
    assert_eq!(file_names(&d), vec!["batch.html"], "no temporary files");
    let html = std::fs::read_to_string(&html_path).unwrap();
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert!(!html.contains("<script") && !html.contains("http://") && !html.contains("https://"));
    assert_eq!(
        html.matches("<svg").count(),
        2,
        "overlay and per-group grid"
    );
    assert!(html.contains("<h2>Groups</h2>") && html.contains("<h2>All groups</h2>"));
    assert!(html.contains("safety-critical"), "caution present");
    // The model box shows the full model with its response.
    assert!(
        html.contains("<code class=\"formula\">response = asym/(1 + exp(-r*(log_dose - xmid)))</code>"),
        "model box with the response"
    );
    // Every compound has a row and appears in the overlay's legend.
    for name in ["KX-101", "KX-102", "KX-117", "LT-4a", "LT-4b", "ref std"] {
        assert!(
            html.contains(&format!(
                "<td>{name}</td><td>converged</td><td class=\"num\">22</td>"
            )),
            "row of {name}"
        );
        assert!(
            html.contains(&format!("\n{name}\n</text>")),
            "legend entry {name}"
        );
    }
    // Demo data generated with KX-117 plateau = 97, x_half = -1.30, rate = 3.2
    // (demo-data/README.md); the row shows estimates ± standard errors near
    // them, in the library's documented order.
    let row = html
        .lines()
        .find(|l| l.contains("<td>KX-117</td>"))
        .unwrap();
    let cells: Vec<f64> = row
        .split("<td class=\"num\">")
        .skip(2)
        .take(3)
        .map(|c| c.split(" ± ").next().unwrap().parse().unwrap())
        .collect();
    println!("KX-117 plateau, x_half, rate = {cells:?}");
    assert!((cells[0] - 97.0).abs() < 3.0, "{row}");
    assert!((cells[1] + 1.30).abs() < 0.08, "{row}");
    assert!((cells[2] - 3.2).abs() < 0.6, "{row}");
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn batch_report_shows_a_failing_group_and_still_writes_the_page() {
    let d = scratch("batchfail");
    // Invented: y = a*exp(-k*x) for wells A1 and C3; B2 has two rows, too few.
    let mut text = String::from("well,x,y\nB2,0.5,2.0\nB2,1.0,1.5\n");
    for (w, a, k) in [("A1", 10.0, 0.3), ("C3", 4.0, 0.8)] {
        for i in 0..10 {
            let x = i as f64 * 0.5;
            text += &format!("{w},{x},{:.12}\n", a * (-k * x).exp());
        }
    }
    let data = d.join("wells.csv");
    std::fs::write(&data, text).unwrap();
    let html_path = d.join("wells.html");
    let (code, _, err) = run(&[
        "report",
        data.to_str().unwrap(),
        "--model",
        "a*exp(-k*x)",
        "--by",
        "well",
        "--out",
        html_path.to_str().unwrap(),
    ]);
    assert_eq!(code, 1, "one group failed: {err}");
    assert!(
        err.contains("1 of 3 groups failed (well = B2); the report shows them"),
        "{err}"
    );
    let html = std::fs::read_to_string(&html_path).unwrap();
    assert!(
        html.contains("<tr class=\"failed\"><td>B2</td><td>failed</td><td class=\"num\">2</td>"),
        "failed row, with its two rows counted"
    );
    assert!(html.contains("too few"), "the reason is shown");
    assert!(
        html.contains("\nB2 (failed)\n</text>"),
        "legend marks the failure"
    );
    let a1 = html.lines().find(|l| l.contains("<td>A1</td>")).unwrap();
    assert!(a1.contains("<td class=\"num\">10.000 ± "), "{a1}");
    assert!(html.contains("safety-critical"));
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn report_without_starts_infers_them_and_a_bad_model_exits_two() {
    // Without --start, inference and the search supply the starts; the demo data
    // were generated with k = 0.085 (demo-data/README.md).
    let (code, out, err) = run(&[
        "report",
        "demo-data/part_cooling.csv",
        "--model",
        "temp = c + a*exp(-k*minutes)",
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("0.0853"), "fitted k missing from the report");
    assert!(out.matches("<svg").count() >= 2);
    // Each start says how inference earned it and what the search made of it,
    // and the ranking of minima lists the search's minima, the best first.
    let starts = &out[out.find("Starting values").expect("starts section")..];
    assert!(starts.contains("enters linearly"), "{starts:.2000}");
    assert!(starts.contains("k: rate; scanned"), "{starts:.2000}");
    // --starts is a ceiling: the report says how many starts the search ran (at most 64)
    let at = starts.find("multistart search (").expect("search sentence") + 19;
    let tried: usize = starts[at..]
        .split(' ')
        .next()
        .and_then(|v| v.parse().ok())
        .expect("count of starts");
    assert!((1..=64).contains(&tried), "{tried}");
    assert!(starts[at..].contains(" starts): minimum ranked 1 of"));
    let ranking = &out[out.find("Ranking of minima").expect("ranking section")..];
    let first = ranking.find("<td>1</td>").or_else(|| ranking.find(">1<"));
    assert!(first.is_some(), "{ranking:.1500}");
    assert!(
        ranking[..1500.min(ranking.len())].contains("k = 0.0853"),
        "{ranking:.1500}"
    );
    let (code, _, err) = run(&[
        "report",
        "demo-data/part_cooling.csv",
        "--model",
        "temp = c + a*exp(-k*hours)",
        "--start",
        "c=1,a=1,k=1",
    ]);
    assert_eq!(code, 2, "{err}");
}

/// The part of `html` from heading `from` to heading `to`.
fn between<'a>(html: &'a str, from: &str, to: &str) -> &'a str {
    let a = html.find(&format!("<h2>{from}</h2>")).expect(from);
    let b = html[a..].find(&format!("<h2>{to}</h2>")).expect(to);
    &html[a..a + b]
}

#[test]
fn log_x_views_are_left_out_when_x_has_negative_values() {
    // log_dose runs from -3 to 2 (demo-data/README.md): its log would drop most points.
    let (code, out, err) = run(&[
        "report",
        "demo-data/plate_dose_response.csv",
        "--model",
        "logistic-3",
        "--x",
        "log_dose",
        "--y",
        "response",
        "--start",
        "asym=90,xmid=-0.5,r=2",
    ]);
    assert_eq!(code, 0, "{err}");
    let survey = between(&out, "Survey of the data", "Fit");
    assert!(
        survey.contains("<p class=\"note\">The views against log log_dose are left out: "),
        "{survey:.600}"
    );
    assert!(survey.contains("values of log_dose are negative"), "{survey:.600}");
    // Three views remain, none against log log_dose, in the plot or the table.
    for t in ["response against log_dose", "1/response against log_dose", "ln response against log_dose"] {
        assert!(survey.contains(&format!("\n{t}\n</text>")), "panel {t}");
    }
    assert_eq!(
        out.matches("against log log_dose").count(),
        1,
        "only the note names the views against log log_dose; none is drawn or listed"
    );
    // With x ≥ 0 (the cooling demo has one x = 0) the six views stay.
    let d = scratch("logx");
    let html = std::fs::read_to_string(cooling_report(&d)).unwrap();
    let survey = between(&html, "Survey of the data", "Fit");
    assert!(!survey.contains("class=\"note\""), "no note: {survey:.400}");
    assert!(survey.contains("\nln temp against log minutes\n</text>"));
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn features_not_used_for_the_starts_are_folded_away() {
    let d = scratch("features");
    let html = std::fs::read_to_string(cooling_report(&d)).unwrap();
    let feats = between(&html, "Features found", "Starting values");
    let fold = feats.find("<details").expect("a details element");
    let (front, folded) = feats.split_at(fold);
    // Starts given: the note says so; the shape of temp against minutes is up front.
    assert!(front.contains("given on the command line, so none was read from a feature"), "{front}");
    let up_front = front.matches("<tr><td>").count();
    assert_eq!(up_front, 3, "direction, plateau and intercept: {front}");
    assert!(front.contains("<td>temp against minutes</td><td>high-end plateau</td><td class=\"num\">24.3</td>"));
    // Everything else is inside the details element, with a count in its summary.
    let inside = folded.matches("<tr><td>").count();
    let summary = format!("<summary>{inside} other features found in the views</summary>");
    assert!(folded.contains(&summary), "{folded:.300}");
    assert!(inside >= 15, "{inside} rows folded");
    assert!(folded.contains("<td>1/temp against minutes</td><td>straight segment, slope</td>"));
    assert!(folded.trim_end().ends_with("</details>"));
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn figures_fit_the_text_column() {
    let (code, out, err) = run(&[
        "report",
        "demo-data/part_cooling.csv",
        "--model",
        "decay-to-floor",
        "--x",
        "minutes",
        "--y",
        "temp",
        "--start",
        "c=20,a=150,k=0.1",
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("figure { margin: .5rem 0 1rem; max-width: 100%; }"));
    assert!(out.contains("figure svg { display: block; width: 100%; max-width: 100%; height: auto;"));
    assert!(!out.contains("100vw") && !out.contains("translateX"), "no figure wider than the column");
    // The single page's model box names the response too.
    assert!(out.contains("<code class=\"formula\">temp = c + a*exp(-k*minutes)</code>"));
}

/// A batch of `n` invented exponential decays `y = a*exp(-0.5*x)`, a = 10, 11, …,
/// with group `fail` given two rows only (too few to fit), written last.
fn decay_batch(dir: &Path, n: usize, fail: &str) -> PathBuf {
    let mut text = String::from("well,x,y\n");
    for g in 0..n {
        let a = 10.0 + g as f64;
        for i in 0..10 {
            let x = i as f64 * 0.5;
            text += &format!("W{:02},{x},{:.9}\n", g + 1, a * (-0.5 * x).exp());
        }
    }
    text += &format!("{fail},0.5,2.0\n{fail},1.0,1.5\n");
    let p = dir.join("wells.csv");
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn many_groups_get_panels_on_a_common_y_scale_failed_first() {
    let d = scratch("many");
    let data = decay_batch(&d, 14, "Z9");
    let html_path = d.join("many.html");
    let (code, _, err) = run(&[
        "report",
        data.to_str().unwrap(),
        "--model",
        "a*exp(-k*x)",
        "--by",
        "well",
        "--start",
        "a=10,k=0.4",
        "--out",
        html_path.to_str().unwrap(),
    ]);
    assert_eq!(code, 1, "one group failed: {err}");
    let html = std::fs::read_to_string(&html_path).unwrap();
    // The model box shows the response.
    assert!(html.contains("<code class=\"formula\">y = a*exp(-k*x)</code>"), "model box");
    // 15 groups: no overlay chart, a note instead, and one grid of 15 panels.
    let all = between(&html, "All groups", "Each group");
    assert!(!all.contains("<svg"), "no crowded overlay");
    assert!(all.contains("15 groups are too many to tell apart on one chart (at most 12)"), "{all}");
    let grid = between(&html, "Each group", "Warnings");
    assert_eq!(grid.matches("<svg").count(), 1);
    // The failed group's panel comes first, then W01 … W14 in order.
    let titles: Vec<usize> = std::iter::once("Z9 (failed)".to_string())
        .chain((1..=14).map(|g| format!("W{g:02}")))
        .map(|t| grid.find(&format!("\n{t}\n</text>")).unwrap_or_else(|| panic!("panel {t}")))
        .collect();
    assert!(titles.windows(2).all(|w| w[0] < w[1]), "panel order {titles:?}");
    // A common y scale: y runs from 0.9 to 23 over all groups, so every panel,
    // even W01's (y ≤ 10), carries the same top tick label 20.
    assert_eq!(grid.matches("\n20\n</text>").count(), 15, "a shared top tick in each panel");
    // The failed row stands out: its class is styled in red on the page.
    assert!(html.contains("<tr class=\"failed\"><td>Z9</td><td>failed</td>"));
    assert!(html.contains("table.groups tbody tr.failed td:nth-child(2) { color: #b3261e;"));
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn a_few_groups_share_one_chart_and_the_panels_share_y() {
    let d = scratch("few");
    let data = decay_batch(&d, 3, "Z9");
    let html_path = d.join("few.html");
    let (code, _, err) = run(&[
        "report",
        data.to_str().unwrap(),
        "--model",
        "a*exp(-k*x)",
        "--by",
        "well",
        "--start",
        "a=10,k=0.4",
        "--out",
        html_path.to_str().unwrap(),
    ]);
    assert_eq!(code, 1, "{err}");
    let html = std::fs::read_to_string(&html_path).unwrap();
    let all = between(&html, "All groups", "Each group");
    assert_eq!(all.matches("<svg").count(), 1, "the overlay chart");
    for g in ["W01", "W02", "W03", "Z9 (failed)"] {
        assert!(all.contains(&format!("\n{g}\n</text>")), "legend {g}");
    }
    // Four distinct marker colours in the overlay (one per group).
    for c in ["#0072B2", "#D55E00", "#009E73", "#CC79A7"] {
        assert!(all.contains(c), "colour {c}");
    }
    let grid = between(&html, "Each group", "Warnings");
    assert!(grid.contains("Groups that failed or did not converge come first."));
    let z9 = grid.find("\nZ9 (failed)\n</text>").expect("failed panel");
    let w1 = grid.find("\nW01\n</text>").expect("W01 panel");
    assert!(z9 < w1, "failed panel first");
    // y runs to 12 (W03's a): every converged panel has the tick 12.
    assert!(grid.matches("\n12\n</text>").count() >= 3, "shared y ticks");
    let _ = std::fs::remove_dir_all(&d);
}

/// Runs a command with a deadline, its output going to files in `dir` (a
/// pipe would fill up and stall a large DOM dump); returns stdout, or `None`
/// when it did not finish in time.
fn run_with_deadline(cmd: &mut Command, dir: &Path, limit: Duration) -> Option<String> {
    let out_path = dir.join("chromium.out");
    let out = std::fs::File::create(&out_path).ok()?;
    let err = std::fs::File::create(dir.join("chromium.err")).ok()?;
    let mut child = cmd
        .stdout(out)
        .stderr(err)
        .stdin(Stdio::null())
        .spawn()
        .ok()?;
    let start = Instant::now();
    loop {
        if let Ok(Some(_)) = child.try_wait() {
            return std::fs::read_to_string(&out_path).ok();
        }
        if start.elapsed() > limit {
            let _ = child.kill();
            let _ = child.wait();
            return None;
        }
        std::thread::sleep(Duration::from_millis(100));
    }
}

fn chromium(profile: &Path) -> Command {
    let mut c = Command::new("chromium");
    c.args([
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
    ])
    .arg(format!("--user-data-dir={}", profile.display()));
    c
}

#[test]
fn report_renders_in_headless_chromium() {
    let found = Command::new("chromium")
        .arg("--version")
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .map(|s| s.success())
        .unwrap_or(false);
    if !found {
        if std::env::var_os("CI").is_some() {
            panic!("chromium not found, and CI must have it (.ci/run installs it)");
        }
        eprintln!("chromium not found; report rendering check skipped");
        return;
    }
    let d = scratch("chromium");
    let html = cooling_report(&d);
    let url = format!("file://{}", html.display());
    let limit = Duration::from_secs(120);

    let dom = run_with_deadline(
        chromium(&d.join("profile-dom")).arg("--dump-dom").arg(&url),
        &d,
        limit,
    )
    .expect("chromium --dump-dom finished in time");
    assert!(dom.matches("<svg").count() >= 2, "inline plots in the DOM");
    assert!(
        dom.contains("<h2>Estimates</h2>") && dom.contains("Standard error"),
        "estimates table"
    );
    assert!(dom.contains("safety-critical"), "caution in the DOM");

    let shot = d.join("report.png");
    run_with_deadline(
        chromium(&d.join("profile-shot"))
            .arg(format!("--screenshot={}", shot.display()))
            .arg("--window-size=1280,3600")
            .arg(&url),
        &d,
        limit,
    )
    .expect("chromium --screenshot finished in time");
    let png = std::fs::read(&shot).expect("screenshot written");
    assert!(png.starts_with(b"\x89PNG"), "a PNG");
    assert!(
        png.len() > 50_000,
        "a page with content, not a blank: {} bytes",
        png.len()
    );
    let keep = Path::new(env!("CARGO_MANIFEST_DIR")).join("target/plots-check");
    if std::fs::create_dir_all(&keep).is_ok() {
        let _ = std::fs::copy(&shot, keep.join("report-chromium.png"));
    }

    // The batch page: the overlay chart and the group table are in the rendered DOM.
    let batch = plate_batch_report(&d);
    let url = format!("file://{}", batch.display());
    let dom = run_with_deadline(
        chromium(&d.join("profile-batch"))
            .arg("--dump-dom")
            .arg(&url),
        &d,
        limit,
    )
    .expect("chromium --dump-dom of the batch page finished in time");
    assert!(
        dom.matches("<svg").count() >= 2,
        "overlay and grid in the DOM"
    );
    assert!(
        dom.contains("one curve per compound\n</text>"),
        "overlay chart title rendered"
    );
    assert!(
        dom.contains("<table class=\"groups\">") && dom.contains("<td>ref std</td>"),
        "group table in the DOM"
    );
    assert!(dom.contains("safety-critical"), "caution in the DOM");
    let shot = d.join("batch.png");
    run_with_deadline(
        chromium(&d.join("profile-batch-shot"))
            .arg(format!("--screenshot={}", shot.display()))
            .arg("--window-size=1280,2400")
            .arg(&url),
        &d,
        limit,
    )
    .expect("chromium --screenshot of the batch page finished in time");
    let png = std::fs::read(&shot).expect("batch screenshot written");
    assert!(
        png.starts_with(b"\x89PNG") && png.len() > 50_000,
        "batch page screenshot with content: {} bytes",
        png.len()
    );
    if std::fs::create_dir_all(&keep).is_ok() {
        let _ = std::fs::copy(&shot, keep.join("batch-chromium.png"));
    }
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn pages_end_with_the_run_line() {
    let d = scratch("runline");
    let page = d.join("cooling.html");
    let args = [
        "report",
        "demo-data/part_cooling.csv",
        "--model",
        "temp = ambient + delta*exp(-k*minutes)",
        "--seed",
        "5",
        "--out",
        page.to_str().unwrap(),
    ];
    let (code, _, err) = run(&args);
    assert_eq!(code, 0, "{err}");
    let html = std::fs::read_to_string(&page).unwrap();
    let want = format!(
        "<footer class=\"meta\"><p>foothold {} run as: foothold report demo-data/part_cooling.csv --model &#39;temp = ambient + delta*exp(-k*minutes)&#39; --seed 5 --out {} (search: seed 5, 64 starts)</p></footer>\n</main>",
        env!("CARGO_PKG_VERSION"),
        page.display()
    );
    assert!(html.contains(&want), "{}", &html[html.len().saturating_sub(600)..]);
    let _ = std::fs::remove_dir_all(&d);
}
