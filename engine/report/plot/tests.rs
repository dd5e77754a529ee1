//! Tests of the plot layer: SVG content, PNG files, robustness to bad values.

use super::demo::{saturation_fit, saturation_survey};
use super::*;
use std::path::PathBuf;

fn count(hay: &str, needle: &str) -> usize {
    hay.matches(needle).count()
}

fn check_dir() -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/plots-check");
    std::fs::create_dir_all(&dir).expect("create target/plots-check");
    dir
}

fn png_ok(path: &Path) -> usize {
    let bytes = std::fs::read(path).expect("png written");
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "PNG signature");
    bytes.len()
}

#[test]
fn survey_svg_has_titles_and_one_circle_per_finite_point() {
    let panels = saturation_survey();
    let svg = survey_sheet_svg(&panels);
    assert!(svg.starts_with("<svg"), "{}", &svg[..svg.len().min(80)]);
    assert!(!svg.contains("plot unavailable"));
    for p in &panels {
        assert!(svg.contains(&p.title), "missing title {}", p.title);
    }
    let expected: usize = panels.iter().map(Panel::drawable_points).sum();
    // 25 rows, one NaN; y = 0 has no 1/y or ln y; x = 0 has no log x.
    assert_eq!(panels[0].drawable_points(), 24);
    assert_eq!(panels[1].drawable_points(), 23);
    assert_eq!(panels[3].drawable_points(), 23);
    assert_eq!(panels[4].drawable_points(), 23);
    assert_eq!(count(&svg, "<circle"), expected);
    assert!(count(&svg, "<polyline") > 6, "lines drawn");
    assert!(svg.contains("plateau 4.93") && svg.contains("half height"));
    assert!(svg.contains("not shown"), "dropped points are reported");
}

#[test]
fn empty_panel_says_why() {
    let mut p = Panel::new("ln y against x", "x", "ln y");
    p.points = vec![(1.0, f64::NAN), (2.0, f64::NEG_INFINITY)];
    p.empty_reason = "every y ≤ 0".into();
    let svg = survey_sheet_svg(&[p]);
    assert!(svg.starts_with("<svg"));
    assert!(svg.contains("no valid points (every y ≤ 0)"), "{svg}");
    assert_eq!(count(&svg, "<circle"), 0);
}

#[test]
fn awkward_values_do_not_panic() {
    let cases: Vec<Vec<(f64, f64)>> = vec![
        vec![(1.0, 2.0)],
        vec![(3.0, 7.0); 5],
        vec![(-1e200, 1e-300), (1e200, -1e200), (0.0, 0.0)],
        vec![(1.0, 1e10), (1.0 + 1e-12, 1e10 + 1e-3)],
        vec![(f64::NAN, f64::NAN), (f64::INFINITY, 1.0), (2.0, 3.0)],
        vec![],
    ];
    for pts in cases {
        let finite = pts
            .iter()
            .filter(|(x, y)| x.is_finite() && y.is_finite())
            .count();
        let mut p = Panel::new("awkward", "x", "y");
        p.points = pts.clone();
        p.hlines = vec![(f64::NAN, "nan".into()), (1e300, "far".into())];
        p.markers = vec![(f64::INFINITY, 0.0, "inf".into())];
        p.segments = vec![((f64::NAN, 0.0), (1.0, 1.0), "bad".into())];
        p.curves = vec![(
            vec![(0.0, f64::NAN), (1.0, 1.0), (2.0, f64::INFINITY)],
            "c".into(),
        )];
        let mut q = p.clone();
        q.log_x = true;
        let svg = survey_sheet_svg(&[p, q.clone()]);
        assert!(svg.starts_with("<svg"));
        assert!(!svg.contains("plot unavailable"), "{pts:?}: {svg}");
        assert_eq!(
            count(&svg, "<circle"),
            finite + q.drawable_points(),
            "{pts:?}"
        );
    }
}

#[test]
fn fit_svg_has_three_panels_and_all_points() {
    let sheet = saturation_fit();
    let svg = fit_sheet_svg(&sheet);
    assert!(svg.starts_with("<svg"));
    for t in [
        "Fit of y",
        "Residuals against x",
        "Residuals against fitted values",
    ] {
        assert!(svg.contains(t), "missing {t}");
    }
    assert!(svg.contains("starting curve") && svg.contains("fitted curve"));
    // 24 finite rows appear in the data panel and in both residual panels.
    assert_eq!(count(&svg, "<circle"), 3 * 24);
}

#[test]
fn survey_and_fit_png_are_written() {
    let dir = check_dir();
    let survey = dir.join("survey.png");
    survey_sheet_png(&saturation_survey(), &survey).expect("survey png");
    assert!(
        png_ok(&survey) > 20_000,
        "a 1050×600 sheet with text is not tiny"
    );
    let fit = dir.join("fit.png");
    fit_sheet_png(&saturation_fit(), &fit).expect("fit png");
    assert!(png_ok(&fit) > 20_000);
    std::fs::write(
        dir.join("survey.svg"),
        survey_sheet_svg(&saturation_survey()),
    )
    .expect("svg");
}

#[test]
fn png_to_missing_directory_is_an_error_not_a_panic() {
    let path = Path::new("/nonexistent-dir-for-foothold/x.png");
    assert!(survey_sheet_png(&saturation_survey(), path).is_err());
}
