//! End-to-end tests of `--run LOG:KEY=VALUE,...`: a joint fit of the demo counts log and degrees
//! log, each with its own loader settings, gives the article file's numbers; bad keys and
//! values are refused with one line naming the option (exit 2).

use crate::common::{demo_data, swingfit};

fn counts_run() -> String {
    format!(
        "{}:time_col=t_ms,angle_col=counts,time_unit=ms,angle_unit=counts,counts_per_rev=10000",
        demo_data("ba7_release60_counts.csv").display()
    )
}

fn degrees_run() -> String {
    format!("{}:time_col=time_s,angle_col=angle_deg", demo_data("ba7_release15_deg.csv").display())
}

fn json(path: &std::path::Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path).expect("read")).expect("json")
}

#[test]
fn two_runs_give_the_article_files_numbers() {
    let dir = tempfile::tempdir().expect("tmp");
    let fit_json = dir.path().join("fit.json");
    let fit = swingfit()
        .args(["fit", "--run", &counts_run(), "--run", &degrees_run()])
        .args(["--damping", "viscous,coulomb,quadratic", "--json"])
        .arg(&fit_json)
        .output()
        .expect("runs");
    assert!(fit.status.success(), "{}", String::from_utf8_lossy(&fit.stderr));
    // The same two logs read by the demo article file (its [[run]] tables carry these settings).
    let text = std::fs::read_to_string(demo_data("ba7_article.toml")).expect("article");
    let data = demo_data("");
    let text = text
        .replace(
            "log = \"ba7_",
            &format!("log = \"{}/ba7_", data.display().to_string().trim_end_matches('/')),
        )
        .replace("damping = \"auto\"", "damping = [\"viscous\", \"coulomb\", \"quadratic\"]");
    let art = dir.path().join("art.toml");
    std::fs::write(&art, text).expect("write");
    let out = dir.path().join("sheet");
    let sheet = swingfit().arg("sheet").arg(&art).arg("--out").arg(&out).output().expect("runs");
    assert!(sheet.status.success(), "{}", String::from_utf8_lossy(&sheet.stderr));
    let doc = json(&fit_json);
    let rows = json(&out.join("sheet.json"))["coefficients"].as_array().expect("rows").clone();
    let sheet_value = |key: &str| {
        rows.iter().find(|r| r["key"] == key).and_then(|r| r["value"].as_f64()).expect(key)
    };
    for (fit_key, sheet_key) in [("omega_n", "omega_n"), ("viscous", "b1"), ("coulomb", "b0")] {
        let a = doc["normalized"][fit_key]["value"].as_f64().expect(fit_key);
        let keys: Vec<String> = rows.iter().map(|r| r["key"].to_string()).collect();
        let b = rows
            .iter()
            .find(|r| r["key"] == sheet_key || r["key"] == fit_key)
            .and_then(|r| r["value"].as_f64())
            .unwrap_or_else(|| panic!("{sheet_key} not in {keys:?}"));
        assert!((a - b).abs() <= 1e-12 * b.abs(), "{fit_key}: --run {a} vs article {b}");
    }
    assert!(sheet_value("omega_n") > 5.0);
    assert_eq!(doc["runs"].as_array().map(Vec::len), Some(2));
}

#[test]
fn bad_keys_and_values_are_refused_in_one_line() {
    let deg = demo_data("ba7_release15_deg.csv").display().to_string();
    for (arg, expect) in [
        (
            format!("{deg}:angel_unit=deg"),
            "angel_unit: unknown field `angel_unit`, expected one of",
        ),
        (
            format!("{deg}:angle_unit=dgs"),
            "angle_unit: expected one of rad, mrad, deg, grad, counts, found \"dgs\"",
        ),
        (
            format!("{deg}:counts_per_rev=-4"),
            "counts_per_rev: expected a positive number of counts",
        ),
        (format!("{deg}:from=soon"), "from: invalid type"),
        (format!("{deg}:log=other.csv"), "the log goes before the ':'"),
        (
            format!("{deg}:counts_wrap=12"),
            "counts_wrap: expected a counter width of 8, 16, 24 or 32",
        ),
        (format!("{deg}:rate=0"), "rate: expected a positive sample rate"),
        (format!("{deg}:skip_lines=-1"), "skip_lines: expected a number of lines"),
        (format!("{deg}:duplicate_times=average"), "duplicate_times: expected keep-first or mean"),
        (
            format!("{deg}:signal_scale=0.05V"),
            "signal_scale: \"0.05V\": expected VALUE[UNIT]/ANGLE_UNIT",
        ),
        (format!("{deg}:signal_zero=nan"), "signal_zero: expected a finite reading"),
    ] {
        let out = swingfit().args(["fit", "--run", &arg]).output().expect("runs");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{arg}: {err}");
        assert_eq!(err.lines().count(), 1, "{err}");
        assert!(err.contains(&format!("--run {arg:?}: ")) && err.contains(expect), "{arg}: {err}");
    }
    // The new keys reach the loader: a counter width on a degrees log is refused by it.
    let out =
        swingfit().args(["fit", "--run", &format!("{deg}:counts_wrap=16")]).output().expect("runs");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("--counts-wrap is for encoder counts"), "{err}");
    // --run with loader options for all logs is ambiguous: refused by the parser (exit 2).
    let out = swingfit().args(["fit", "--run", &deg, "--from", "1"]).output().expect("runs");
    assert_eq!(out.status.code(), Some(2));
}
