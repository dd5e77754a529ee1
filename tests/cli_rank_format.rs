//! Number formatting and ranking order of `rank` and `infer` on the real
//! binary (issue 10): shares as percentages, iterations as whole numbers, one
//! CSV number style across commands, plain words for a shape, and a ranking
//! that is monotone in the sum of squares unless a demotion says why.

mod common;

use common::cli::{run, scratch_file};

/// Uniform noise at x = 0..29 (invented; the same table as
/// tests/cli_identifiability.rs): the search finds a minimum running to
/// infinity with a slightly lower sum of squares than the proper one.
const NOISE: &str = "x,y\n0,0.134364\n1,0.847434\n2,0.763775\n3,0.255069\n4,0.495435\n\
5,0.449491\n6,0.651593\n7,0.788723\n8,0.093860\n9,0.028347\n10,0.835765\n11,0.432767\n\
12,0.762280\n13,0.002106\n14,0.445387\n15,0.721540\n16,0.228762\n17,0.945271\n\
18,0.901427\n19,0.030590\n20,0.025446\n21,0.541412\n22,0.939149\n23,0.381204\n\
24,0.216599\n25,0.422117\n26,0.029041\n27,0.221692\n28,0.437888\n29,0.495812\n";

fn rank_noise(format: &str) -> String {
    let p = scratch_file(&format!("rank-{format}"), NOISE);
    let (code, out, err) = run(&[
        "rank",
        p.to_str().unwrap(),
        "--model",
        "a*exp(-r*x)+c",
        "--format",
        format,
        "--top",
        "10",
    ]);
    assert!(code == 0 || code == 1, "exit {code}: {err}");
    out
}

#[test]
fn rank_table_prints_percentages_and_whole_iterations() {
    let out = rank_noise("table");
    let heads: Vec<&str> = out.lines().filter(|l| l.starts_with("rank ")).collect();
    assert!(!heads.is_empty(), "{out}");
    for h in heads {
        let share = h
            .split("share ")
            .nth(1)
            .unwrap()
            .split("  ")
            .next()
            .unwrap();
        assert!(share.ends_with(" %"), "{h}");
        let pct: f64 = share.trim_end_matches(" %").parse().unwrap();
        assert!((0.0..=100.0).contains(&pct), "{h}");
        let it = h.split("median iterations ").nth(1).unwrap();
        let it = it.split_whitespace().next().unwrap();
        assert!(
            it.parse::<u64>().is_ok(),
            "iterations {it:?} not whole: {h}"
        );
    }
}

#[test]
fn rank_is_monotone_in_ssr_or_says_why() {
    let out = rank_noise("json");
    let v: serde_json::Value = serde_json::from_str(&out).expect("json");
    let c = v["candidates"].as_array().unwrap();
    let mut demotions = 0;
    for k in 1..c.len() {
        let (a, b) = (
            c[k - 1]["ssr"].as_f64().unwrap(),
            c[k]["ssr"].as_f64().unwrap(),
        );
        if b < a {
            // A lower sum of squares below a higher one: the demotion must be explained.
            let note = c[k]["demoted"].as_str().unwrap_or_else(|| {
                panic!("rank {} (ssr {b}) below ssr {a} without a reason", k + 1)
            });
            assert!(note.contains("runs to infinity"), "{note}");
            assert!(!c[k]["divergent"].as_array().unwrap().is_empty());
            demotions += 1;
        }
        assert!(c[k]["iterations"].is_u64(), "{}", c[k]);
    }
    // This table does provoke one (a decay rate running to infinity).
    assert!(demotions >= 1, "{out}");
    let table = rank_noise("table");
    assert!(table.contains("  note: ranked below rank 1"), "{table}");
}

/// A CSV number is written the way `fit` writes it: plain decimals in
/// [1e-5, 1e16), no exponent, and it reads back to the same value.
fn plain(cell: &str) -> bool {
    match cell.parse::<f64>() {
        Ok(v) if v == 0.0 || (1e-5..1e16).contains(&v.abs()) => !cell.contains('e'),
        Ok(_) => true,
        Err(_) => cell.is_empty(),
    }
}

#[test]
fn rank_and_infer_csv_use_the_fit_number_style() {
    let csv = rank_noise("csv");
    let mut lines = csv.lines();
    assert_eq!(
        lines.next(),
        Some("rank,parameter,start,estimate,ssr,share,iterations")
    );
    let mut n = 0;
    for l in lines {
        let cells: Vec<&str> = l.split(',').collect();
        for c in &cells[2..] {
            assert!(plain(c), "cell {c:?} in {l}");
        }
        assert!(cells[6].parse::<u64>().is_ok(), "{l}");
        n += 1;
    }
    assert!(n >= 3, "{csv}");

    // infer: starts near 42.4 and 1.83 (enzyme demo, demo-data/README.md).
    let (code, csv, err) = run(&[
        "infer",
        "demo-data/enzyme_assay.csv",
        "--model",
        "rate = vmax*substrate/(km + substrate)",
        "--format",
        "csv",
    ]);
    assert_eq!(code, 0, "{err}");
    let vmax = csv
        .lines()
        .find(|l| l.starts_with("vmax,"))
        .expect("vmax row");
    let cell = vmax.split(',').nth(1).unwrap();
    assert!(plain(cell) && !cell.contains('e'), "{vmax}");
    let v: f64 = cell.parse().unwrap();
    assert!((v - 42.5).abs() < 2.0, "{vmax}");
}

#[test]
fn infer_prints_the_shape_in_words() {
    let (code, out, err) = run(&[
        "infer",
        "demo-data/enzyme_assay.csv",
        "--model",
        "rate = vmax*substrate/(km + substrate)",
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("  shape: increasing\n"), "{out}");
    assert!(!out.contains("Increasing"), "{out}");
}

/// Uniform noise at x = 0..29 (invented; Python's `random.seed(6)`,
/// `random.uniform(0, 1)`, six decimals). Fitting `a*exp(-r*x)+c` to it, the
/// search ends on a flat valley where a·r and a + c are fixed while a grows
/// (the straight-line limit): several end points with the same sum of squares.
const NOISE6: &str = "x,y\n0,0.793340\n1,0.821954\n2,0.485035\n3,0.261621\n4,0.000452\n\
5,0.662819\n6,0.470254\n7,0.759731\n8,0.373160\n9,0.770140\n10,0.272698\n11,0.801915\n\
12,0.729825\n13,0.414006\n14,0.538305\n15,0.682052\n16,0.192985\n17,0.553615\n\
18,0.805124\n19,0.265521\n20,0.803365\n21,0.685690\n22,0.844282\n23,0.335582\n\
24,0.093135\n25,0.800283\n26,0.804782\n27,0.445212\n28,0.093780\n29,0.197162\n";

#[test]
fn flat_valley_is_reported_once() {
    let p = scratch_file("valley", NOISE6);
    let args = |f: &'static str| {
        vec![
            "rank".to_string(),
            p.to_str().unwrap().to_string(),
            "--model".into(),
            "a*exp(-r*x)+c".into(),
            "--top".into(),
            "20".into(),
            "--format".into(),
            f.into(),
        ]
    };
    let a = args("json");
    let (code, out, err) = run(&a.iter().map(String::as_str).collect::<Vec<_>>());
    assert!(code == 0 || code == 1, "exit {code}: {err}");
    let v: serde_json::Value = serde_json::from_str(&out).expect("json");
    let c = v["candidates"].as_array().unwrap();
    // No two entries left with the same divergent parameters and the same
    // sum of squares (within 1e-6): those were one valley listed several times.
    for i in 0..c.len() {
        for j in (i + 1)..c.len() {
            let (si, sj) = (c[i]["ssr"].as_f64().unwrap(), c[j]["ssr"].as_f64().unwrap());
            let same = (si - sj).abs() <= 1e-6 * si.max(sj);
            assert!(
                !(same && c[i]["divergent"] == c[j]["divergent"]),
                "ranks {} and {} look like one valley: {si} {sj}",
                i + 1,
                j + 1
            );
        }
    }
    let valleys: Vec<&serde_json::Value> =
        c.iter().filter(|x| !x["flat_valley"].is_null()).collect();
    assert!(!valleys.is_empty(), "{out}");
    for x in &valleys {
        let fv = &x["flat_valley"];
        assert!(fv["minima"].as_u64().unwrap() >= 2, "{fv}");
        assert!(!fv["direction"].as_array().unwrap().is_empty(), "{fv}");
        let (lo, hi) = (
            fv["ssr_low"].as_f64().unwrap(),
            fv["ssr_high"].as_f64().unwrap(),
        );
        assert!(lo <= hi && hi - lo <= 1e-5 * hi, "{fv}");
        assert_eq!(x["ssr"].as_f64().unwrap(), lo, "shown at its lowest point");
    }
    let t = args("table");
    let (_, table, _) = run(&t.iter().map(String::as_str).collect::<Vec<_>>());
    assert!(table.contains("  note: flat valley: "), "{table}");
    assert!(table.contains("along a direction moving "), "{table}");
}
