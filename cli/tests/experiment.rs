//! End-to-end tests of `layflow experiment`, `merge` and `summarize`: shards merge exactly, a killed or interrupted run resumes to the same bytes, damage is caught.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use common::{layflow, root, text};

/// The files a finished experiment leaves, all of which must match byte for byte.
const OUTPUTS: &[&str] = &["units.jsonl", "results.csv", "summary.csv", "summary.json"];

/// A plan over the demo plant in `dir`: 2 layouts × 2 fleet sizes × `reps`.
fn plan(dir: &Path, reps: u32, horizon: &str) -> PathBuf {
    let p = dir.join("plan.yaml");
    let demo = root().join("scenarios/demo.yaml");
    std::fs::write(
        &p,
        format!(
            "scenario: {}\nreplications: {reps}\nseed: 11\nhorizon: {horizon}\nwarmup: 1 d\nfactors:\n  layout: [current, proposed]\n  fleets.forklifts.count: [1, 2]\n",
            demo.display()
        ),
    )
    .unwrap();
    p
}

fn run(args: &[&str]) -> Output {
    let out = layflow(args);
    assert!(out.status.success(), "{args:?}: {}", text(&out.stderr));
    out
}

fn same_outputs(a: &Path, b: &Path) {
    for f in OUTPUTS {
        let x = std::fs::read(a.join(f)).unwrap_or_else(|e| panic!("{}/{f}: {e}", a.display()));
        let y = std::fs::read(b.join(f)).unwrap_or_else(|e| panic!("{}/{f}: {e}", b.display()));
        assert!(x == y, "{f} differs between {} and {}", a.display(), b.display());
    }
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

#[test]
fn three_shards_merge_to_exactly_the_single_run() {
    let t = tempfile::tempdir().unwrap();
    let plan = plan(t.path(), 4, "3 d");
    let whole = t.path().join("whole");
    let out = run(&["experiment", s(&plan), "--out", s(&whole), "--quiet"]);
    let table = text(&out.stdout);
    assert!(table.contains("4 design points, 16 of 16 units"), "{table}");
    let mut shards = Vec::new();
    for k in 1..=3 {
        let d = t.path().join(format!("shard-{k}"));
        run(&[
            "experiment",
            s(&plan),
            "--shard",
            &format!("{k}/3"),
            "--out",
            s(&d),
            "--quiet",
            "--threads",
            "1",
        ]);
        shards.push(d);
    }
    // A finished shard resumed again (a requeued cluster task) does nothing new.
    let again =
        run(&["experiment", s(&plan), "--shard", "2/3", "--out", s(&shards[1]), "--resume", "--quiet"]);
    assert!(text(&again.stderr).contains("0 to run"), "{}", text(&again.stderr));
    let merged = t.path().join("merged");
    let mut args = vec!["merge"];
    args.extend(shards.iter().map(|d| s(d)));
    args.extend(["--out", s(&merged)]);
    let m = run(&args);
    same_outputs(&whole, &merged);
    assert_eq!(m.stdout, out.stdout, "the merge prints the same table");
    // summarize re-prints it from the saved results.
    let again = run(&["summarize", s(&merged)]);
    assert_eq!(again.stdout, out.stdout);
    // Tidy CSV: one row per point × replication × metric.
    let csv = std::fs::read_to_string(whole.join("results.csv")).unwrap();
    let head = csv.lines().next().unwrap();
    assert_eq!(head, "point,layout,fleets.forklifts.count,replication,scope,subject,metric,value");
    let per_unit = csv.lines().filter(|l| l.starts_with("1,current,1,0,")).count();
    assert_eq!(csv.lines().count() - 1, 16 * per_unit);
    // Leaving a shard out is refused, naming what is missing.
    let out = layflow(&["merge", s(&shards[0]), s(&shards[1]), "--out", s(&t.path().join("partial"))]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("units are missing"), "{}", text(&out.stderr));
}

/// Wait until `file` holds at least `lines` lines, or `limit` passes.
fn wait_for_lines(file: &Path, lines: usize, limit: Duration) -> usize {
    let start = Instant::now();
    loop {
        let n = std::fs::read(file).map(|b| b.iter().filter(|&&c| c == b'\n').count()).unwrap_or(0);
        if n >= lines || start.elapsed() > limit {
            return n;
        }
        std::thread::sleep(Duration::from_millis(2));
    }
}

#[test]
fn a_run_killed_mid_way_resumes_to_the_same_bytes() {
    let t = tempfile::tempdir().unwrap();
    // 4 points × 15 replications of 20 days, one thread: a few seconds, so the kill lands mid-way.
    let plan = plan(t.path(), 15, "20 d");
    let whole = t.path().join("whole");
    run(&["experiment", s(&plan), "--out", s(&whole), "--quiet"]);

    let killed = t.path().join("killed");
    let mut child = Command::new(env!("CARGO_BIN_EXE_layflow"))
        .args(["experiment", s(&plan), "--out", s(&killed), "--quiet", "--threads", "1"])
        .current_dir(root())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    // Header plus at least 5 units, then SIGKILL: no chance to clean up.
    let seen = wait_for_lines(&killed.join("units.jsonl"), 6, Duration::from_secs(60));
    child.kill().unwrap();
    child.wait().unwrap();
    let lines = wait_for_lines(&killed.join("units.jsonl"), 0, Duration::ZERO);
    assert!(seen >= 6 && lines < 61, "the kill must land mid-way: {lines} of 61 lines written");
    // Without --resume the folder is refused, so nothing is overwritten.
    let out = layflow(&["experiment", s(&plan), "--out", s(&killed), "--quiet"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("--resume"));
    let out = run(&["experiment", s(&plan), "--out", s(&killed), "--resume", "--quiet"]);
    let err = text(&out.stderr);
    assert!(err.contains(&format!("{} done", lines - 1)) || err.contains("done"), "{err}");
    same_outputs(&whole, &killed);
}

#[test]
fn a_torn_last_line_is_dropped_and_rerun() {
    let t = tempfile::tempdir().unwrap();
    let plan = plan(t.path(), 3, "3 d");
    let whole = t.path().join("whole");
    run(&["experiment", s(&plan), "--out", s(&whole), "--quiet"]);
    // A power cut mid-write: the file ends inside a line.
    let torn = t.path().join("torn");
    std::fs::create_dir(&torn).unwrap();
    let full = std::fs::read(whole.join("units.jsonl")).unwrap();
    let cut = full.len() - full.len() / 5;
    std::fs::write(torn.join("units.jsonl"), &full[..cut]).unwrap();
    let out = run(&["experiment", s(&plan), "--out", s(&torn), "--resume", "--quiet"]);
    let err = text(&out.stderr);
    assert!(err.contains("cut off mid-write") && err.contains("kept the"), "{err}");
    same_outputs(&whole, &torn);
    // Damage in the middle is not a crash: refused, never silently dropped.
    let bad = t.path().join("bad");
    std::fs::create_dir(&bad).unwrap();
    let mut lines: Vec<&[u8]> = full.split(|&b| b == b'\n').collect();
    lines[3] = b"{\"unit\": oops";
    std::fs::write(bad.join("units.jsonl"), lines.join(&b'\n')).unwrap();
    let out = layflow(&["summarize", s(&bad)]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("line 4") && text(&out.stderr).contains("damaged"),
        "{}",
        text(&out.stderr)
    );
}

/// A plan of a million design points: compiled lazily, so a one-unit shard
/// starts, runs and finishes (before, every point was compiled first: minutes
/// and gigabytes), and an error at design point 1 is reported at once, exit 2.
#[test]
fn a_plan_of_a_million_points_runs_a_unit_and_refuses_a_bad_first_point() {
    let t = tempfile::tempdir().unwrap();
    let tiny = root().join("scenarios/validation/tiny-hand-checked.yaml");
    let demand: Vec<String> = (0..1000).map(|i| format!("{:.3}", 0.5 + f64::from(i) * 0.001)).collect();
    let machines: Vec<String> = (1..=1000).map(|i| i.to_string()).collect();
    let body = |first_machines: &str| {
        format!(
            "scenario: {}\nreplications: 1\nseed: 1\nhorizon: 2 h\nwarmup: 1 h\nfactors:\n  demand: [{}]\n  \
             departments.drilling.machines: [{first_machines}, {}]\n",
            tiny.display(),
            demand.join(", "),
            machines[1..].join(", ")
        )
    };
    let plan = t.path().join("million.yaml");
    std::fs::write(&plan, body("1")).unwrap();
    let out_dir = t.path().join("one");
    let out = run(&["experiment", s(&plan), "--shard", "1/1000000", "--out", s(&out_dir), "--quiet"]);
    let err = text(&out.stderr);
    assert!(err.contains("1000000 design points") && err.contains("shard 1/1000000 has 1"), "{err}");
    let units = std::fs::read_to_string(out_dir.join("units.jsonl")).unwrap();
    assert_eq!(units.lines().count(), 2, "the header and the one unit");
    let bad = t.path().join("bad.yaml");
    std::fs::write(&bad, body("0")).unwrap();
    let out = layflow(&["experiment", s(&bad), "--out", s(&t.path().join("bad")), "--quiet"]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("design point 1 (") && err.contains("needs at least 1 machine"), "{err}");
    assert!(!t.path().join("bad").join("units.jsonl").exists(), "nothing ran");
}

/// One changed digit or base64 character in a unit line is refused, with the
/// file and line, by `summarize`, `--resume` and `merge`: never read as a result.
#[test]
fn a_changed_digit_or_base64_character_is_refused() {
    let t = tempfile::tempdir().unwrap();
    let plan = plan(t.path(), 2, "3 d");
    let whole = t.path().join("whole");
    run(&["experiment", s(&plan), "--out", s(&whole), "--quiet"]);
    let full = std::fs::read_to_string(whole.join("units.jsonl")).unwrap();
    let lines: Vec<&str> = full.lines().collect();
    assert!(lines[1].contains("\"sum\":\""), "every unit line has its checksum: {}", lines[1]);
    // Line 3 (the second unit): the first digit of its `events`, then a character inside a histogram.
    let digit = |l: &str| {
        let at = l.find("\"events\":").unwrap() + "\"events\":".len();
        let d = l.as_bytes()[at];
        let swapped = if d == b'9' { '8' } else { (d + 1) as char };
        format!("{}{swapped}{}", &l[..at], &l[at + 1..])
    };
    let base64 = |l: &str| {
        let at = l.find("\"flow_time_hist\":\"").unwrap() + "\"flow_time_hist\":\"".len() + 20;
        let c = l.as_bytes()[at];
        let swapped = if c == b'A' { 'B' } else { 'A' };
        format!("{}{swapped}{}", &l[..at], &l[at + 1..])
    };
    for (what, change) in [("digit", &digit as &dyn Fn(&str) -> String), ("base64", &base64)] {
        let bad = t.path().join(format!("bad-{what}"));
        run(&["experiment", s(&plan), "--out", s(&bad), "--quiet"]);
        let mut changed: Vec<String> = lines.iter().map(|l| l.to_string()).collect();
        changed[2] = change(lines[2]);
        assert_ne!(changed[2], lines[2]);
        std::fs::write(bad.join("units.jsonl"), changed.join("\n") + "\n").unwrap();
        let want =
            format!("{}, line 3: unit 1 does not match its checksum", bad.join("units.jsonl").display());
        for args in [
            vec!["summarize", s(&bad)],
            vec!["experiment", s(&plan), "--out", s(&bad), "--resume", "--quiet"],
            vec!["merge", s(&bad), "--out", s(&bad)],
        ] {
            let out = layflow(&args);
            let err = text(&out.stderr);
            assert_eq!(out.status.code(), Some(2), "{what} {args:?}: {err}");
            assert!(err.contains(&want) && err.contains("--resume"), "{what} {args:?}: {err}");
        }
    }
    // A file from before checksums (no `sum`) is still read, with a note.
    let old = t.path().join("old");
    run(&["experiment", s(&plan), "--out", s(&old), "--quiet"]);
    let unsummed: Vec<String> = lines
        .iter()
        .map(|l| l.split(",\"sum\":").next().unwrap().trim_end_matches('}').to_string() + "}")
        .collect();
    let unsummed: Vec<String> = unsummed
        .iter()
        .zip(&lines)
        .map(|(u, l)| if l.contains("\"sum\"") { u.clone() } else { l.to_string() })
        .collect();
    std::fs::write(old.join("units.jsonl"), unsummed.join("\n") + "\n").unwrap();
    let out = run(&["summarize", s(&old)]);
    assert!(text(&out.stderr).contains("have no checksum"), "{}", text(&out.stderr));
    assert_eq!(out.stdout, run(&["summarize", s(&whole)]).stdout);
}

/// Send `signal` to an experiment once it has saved a few units; it must stop with 130 and a
/// resume hint, and `--resume` must finish to the bytes of an uninterrupted run.
fn signal_stops_cleanly_and_resume_finishes(signal: &str) {
    let t = tempfile::tempdir().unwrap();
    let plan = plan(t.path(), 15, "20 d");
    let whole = t.path().join("whole");
    run(&["experiment", s(&plan), "--out", s(&whole), "--quiet"]);
    let stopped = t.path().join("stopped");
    let child = Command::new(env!("CARGO_BIN_EXE_layflow"))
        .args(["experiment", s(&plan), "--out", s(&stopped), "--quiet", "--threads", "1"])
        .current_dir(root())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    wait_for_lines(&stopped.join("units.jsonl"), 4, Duration::from_secs(60));
    let ok = Command::new("kill").args([signal, &child.id().to_string()]).status().unwrap();
    assert!(ok.success());
    let out = child.wait_with_output().unwrap();
    let err = text(&out.stderr);
    if out.status.success() {
        // The run finished before the signal arrived: nothing to resume, still a valid result.
        same_outputs(&whole, &stopped);
        return;
    }
    assert_eq!(out.status.code(), Some(130), "{err}");
    assert!(err.contains("--resume") && err.contains("Ctrl-C or SIGTERM"), "{err}");
    // Every line on disk is a whole unit: nothing torn by a clean stop.
    let bytes = std::fs::read(stopped.join("units.jsonl")).unwrap();
    assert_eq!(bytes.last(), Some(&b'\n'));
    run(&["experiment", s(&plan), "--out", s(&stopped), "--resume", "--quiet"]);
    same_outputs(&whole, &stopped);
}

#[test]
fn ctrl_c_stops_cleanly_and_resume_finishes() {
    signal_stops_cleanly_and_resume_finishes("-INT");
}

/// A batch scheduler's warning before it kills a job (time limit, preemption).
#[test]
fn sigterm_stops_cleanly_and_resume_finishes() {
    signal_stops_cleanly_and_resume_finishes("-TERM");
}

/// Wait until process `pid` catches SIGTERM (Linux: bit 15 of `SigCgt` in
/// /proc/PID/status), so the signal meets the handler, not the default action.
fn wait_for_handler(pid: u32) {
    let start = Instant::now();
    while start.elapsed() < Duration::from_secs(60) {
        let status = std::fs::read_to_string(format!("/proc/{pid}/status")).unwrap_or_default();
        let caught = status
            .lines()
            .find_map(|l| l.strip_prefix("SigCgt:"))
            .and_then(|m| u64::from_str_radix(m.trim(), 16).ok())
            .unwrap_or(0);
        if caught & (1 << (15 - 1)) != 0 {
            return;
        }
        std::thread::sleep(Duration::from_millis(2));
    }
}

/// `run` keeps nothing durable: SIGTERM ends it at once with one line and exit 130.
#[test]
fn sigterm_stops_a_run_with_one_line() {
    let child = Command::new(env!("CARGO_BIN_EXE_layflow"))
        .args([
            "run",
            "scenarios/demo.yaml",
            "--replications",
            "100000",
            "--horizon",
            "200 d",
            "--threads",
            "1",
        ])
        .current_dir(root())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    wait_for_handler(child.id());
    let ok = Command::new("kill").args(["-TERM", &child.id().to_string()]).status().unwrap();
    assert!(ok.success());
    let out = child.wait_with_output().unwrap();
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(130), "{err}");
    assert!(err.contains("stopped by Ctrl-C or SIGTERM"), "{err}");
}

#[test]
fn bad_plans_and_mixed_results_are_refused() {
    let t = tempfile::tempdir().unwrap();
    let demo = root().join("scenarios/demo.yaml");
    let cases = [
        ("factors:\n  fleets.trucks.count: [1, 2]\n", "no entry with id `trucks`"),
        ("factors:\n  flets.forklifts.count: [1, 2]\n", "has no `flets`"),
        ("factors:\n  layout: []\n", "has no levels"),
        ("factors:\n  layout: [current, nowhere]\n", "no layout named \"nowhere\""),
        ("factors:\n  demand: [1.0, -2]\n", "not a demand factor"),
        // The level a factor sets is blamed on the plan's own line of that factor (line 4 here,
        // after scenario and replications), never on a line of the internal copy.
        (
            "factors:\n  fleets.forklifts.count: [1, 0]\n",
            "yaml, line 4: factor `fleets.forklifts.count`, level 0, in design point 2",
        ),
        ("factors: {}\n", "`factors:` is empty"),
        ("points: []\n", "`points:` is empty"),
        ("", "no `factors:` and no `points:`"),
        ("factors:\n  layout: [current]\nrepliations: 3\n", "unknown field"),
        // Issue 16: a bad `by:` names the field and its line (line 3, after scenario and replications).
        ("by: hour-of-week\nfactors:\n  layout: [current]\n", "yaml, line 3: by:"),
    ];
    for (i, (body, needle)) in cases.iter().enumerate() {
        let p = t.path().join(format!("plan-{i}.yaml"));
        std::fs::write(&p, format!("scenario: {}\nreplications: 2\n{body}", demo.display())).unwrap();
        let out = layflow(&["experiment", s(&p), "--out", s(&t.path().join(format!("o{i}")))]);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{body}: {err}");
        assert!(
            err.contains(needle) && err.contains(&format!("plan-{i}.yaml")),
            "{body}: expected {needle:?} in {err}"
        );
    }
    // A level that makes another field of the scenario wrong: the scenario's own file and line.
    let p = t.path().join("plan-horizon.yaml");
    std::fs::write(
        &p,
        format!("scenario: {}\nreplications: 2\nfactors:\n  run.horizon: [1 h]\n", demo.display()),
    )
    .unwrap();
    let out = layflow(&["experiment", s(&p), "--out", s(&t.path().join("oh"))]);
    let err = text(&out.stderr);
    let warmup_line =
        std::fs::read_to_string(&demo).unwrap().lines().position(|l| l.trim_start().starts_with("warmup:"));
    let want = format!("error in {}, line {}: run.warmup:", demo.display(), warmup_line.unwrap() + 1);
    assert!(err.contains(&want) && err.contains("design point 1 (run.horizon = 1 h) of"), "{want}\n{err}");
    assert_eq!(out.status.code(), Some(2), "{err}");
    // A plan file saved as Latin-1: the line and column of the first bad byte, and what to do.
    let p = t.path().join("plan-latin1.yaml");
    let mut bytes = format!("scenario: {}\nreplications: 2\n# caf", demo.display()).into_bytes();
    bytes.extend([0xE9, b'\n']);
    bytes.extend(b"factors: { demand: [1] }\n");
    std::fs::write(&p, bytes).unwrap();
    let out = layflow(&["experiment", s(&p), "--out", s(&t.path().join("ol"))]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        err.contains("plan-latin1.yaml, line 3: the file is not UTF-8 text: byte 0xE9 in column 6"),
        "{err}"
    );
    assert!(err.contains("save the file as UTF-8"), "{err}");
    let good = plan(t.path(), 2, "2 d");
    for shard in ["0/3", "4/3", "3", "1/0"] {
        let out = layflow(&["experiment", s(&good), "--shard", shard, "--out", s(&t.path().join("x"))]);
        assert_eq!(out.status.code(), Some(2), "--shard {shard}");
        assert!(text(&out.stderr).contains("K/N"), "{}", text(&out.stderr));
    }
    // Results of two versions of a plan do not mix: in a merge, or on --resume.
    let a = t.path().join("a");
    run(&["experiment", s(&good), "--out", s(&a), "--quiet"]);
    let other_dir = t.path().join("other");
    std::fs::create_dir(&other_dir).unwrap();
    let other = plan(&other_dir, 3, "2 d");
    let b = t.path().join("b");
    run(&["experiment", s(&other), "--out", s(&b), "--quiet"]);
    let out = layflow(&["merge", s(&a), s(&b), "--out", s(&t.path().join("m"))]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("different plans or scenario versions"), "{}", text(&out.stderr));
    // (`other` differs in its replications alone, which --resume may raise;
    // a longer horizon is another version.)
    let longer_dir = t.path().join("longer");
    std::fs::create_dir(&longer_dir).unwrap();
    let longer = plan(&longer_dir, 2, "3 d");
    let out = layflow(&["experiment", s(&longer), "--out", s(&a), "--resume", "--quiet"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("another plan or scenario version"), "{}", text(&out.stderr));
}

#[test]
fn listed_points_and_any_scenario_field() {
    let t = tempfile::tempdir().unwrap();
    let demo = root().join("scenarios/demo.yaml");
    let p = t.path().join("points.yaml");
    std::fs::write(
        &p,
        format!(
            "scenario: {}\nreplications: 3\nhorizon: 3 d\nwarmup: 1 d\npoints:\n  - {{ layout: current }}\n  - {{ layout: proposed, fleets.forklifts.dispatch: first-come, products.pump-housing.demand.per_hour: 2.0 }}\n",
            demo.display()
        ),
    )
    .unwrap();
    let d = t.path().join("out");
    let out = run(&["experiment", s(&p), "--out", s(&d), "--quiet"]);
    let table = text(&out.stdout);
    assert!(table.contains("2 design points, 6 of 6 units"), "{table}");
    // A factor a point leaves out keeps the scenario's own value, shown as "-".
    let csv = std::fs::read_to_string(d.join("summary.csv")).unwrap();
    assert!(csv.lines().nth(1).unwrap().starts_with("1,current,-,-,"), "{csv}");
    // The higher pump-housing demand shows in that product's throughput.
    let v: serde_json::Value =
        serde_json::from_slice(&std::fs::read(d.join("summary.json")).unwrap()).unwrap();
    let tp = |pt: usize| {
        v["points"][pt]["metrics"]
            .as_array()
            .unwrap()
            .iter()
            .find(|m| m["subject"] == "pump-housing" && m["metric"] == "throughput_per_h")
            .unwrap()["mean"]
            .as_f64()
            .unwrap()
    };
    assert!(tp(1) > tp(0) * 1.15, "pump-housing throughput {} vs {}", tp(1), tp(0));
}

#[allow(clippy::disallowed_macros)] // a test's notice (cli/clippy.toml keeps print! out of the program)
#[test]
fn the_gnu_parallel_one_liner_matches_a_single_run() {
    if Command::new("parallel").arg("--version").stdout(Stdio::null()).status().is_err() {
        assert!(
            std::env::var_os("LAYFLOW_REQUIRE_PARALLEL").is_none(),
            "LAYFLOW_REQUIRE_PARALLEL is set but GNU parallel is not installed"
        );
        eprintln!(
            "NOTICE: GNU parallel is not installed; the sharded one-liner was not run (CI installs it)"
        );
        return;
    }
    let t = tempfile::tempdir().unwrap();
    let plan = plan(t.path(), 4, "3 d");
    let whole = t.path().join("whole");
    run(&["experiment", s(&plan), "--out", s(&whole), "--quiet"]);
    let bin = env!("CARGO_BIN_EXE_layflow");
    // The one-liner of docs/experiments.md, with the binary's full path.
    let script = format!(
        "cd {dir} && parallel --joblog shards.joblog --resume-failed {bin} experiment plan.yaml --shard {{}}/3 --out shards/{{}} --resume --quiet ::: 1 2 3 \
         && {bin} merge shards/1 shards/2 shards/3 --out merged",
        dir = t.path().display()
    );
    let out = Command::new("bash").args(["-c", &script]).output().unwrap();
    assert!(out.status.success(), "{}", text(&out.stderr));
    same_outputs(&whole, &t.path().join("merged"));
    // The shipped script, with `layflow` found on PATH as a user would have it.
    let bin_dir = Path::new(bin).parent().unwrap();
    let path = format!("{}:{}", bin_dir.display(), std::env::var("PATH").unwrap_or_default());
    let out = Command::new("bash")
        .arg(root().join("scenarios/cluster/parallel.sh"))
        .args([s(&plan), "2", s(&t.path().join("by-script"))])
        .env("PATH", path)
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", text(&out.stderr));
    same_outputs(&whole, &t.path().join("by-script/merged"));
}

#[test]
fn the_slurm_scripts_are_valid_bash_with_known_directives() {
    // What the scripts can be checked for without a cluster: bash parses them,
    // and every #SBATCH line uses an option sbatch documents (from memory of
    // sbatch(1); cli/tests/cluster.rs submits them to a real single-node Slurm).
    const KNOWN: &[&str] = &[
        "--job-name",
        "--array",
        "--output",
        "--error",
        "--time",
        "--cpus-per-task",
        "--mem",
        "--ntasks",
        "--dependency",
        "--partition",
        "--nodes",
        "--requeue",
        "--open-mode",
    ];
    for f in ["experiment-array.sbatch", "merge.sbatch", "submit.sh"] {
        let path = root().join("scenarios/cluster").join(f);
        let out = Command::new("bash").args(["-n", s(&path)]).output().unwrap();
        assert!(out.status.success(), "{f}: {}", text(&out.stderr));
        let body = std::fs::read_to_string(&path).unwrap();
        for line in body.lines().filter(|l| l.starts_with("#SBATCH")) {
            let opt = line.trim_start_matches("#SBATCH").trim();
            let name = opt.split(['=', ' ']).next().unwrap();
            assert!(KNOWN.contains(&name), "{f}: unknown sbatch option in {line:?}");
            assert!(opt.contains('=') || opt == "--requeue", "{f}: write options as --name=value: {line:?}");
        }
    }
}

#[test]
fn a_reader_that_stops_early_gets_no_backtrace() {
    // `layflow summarize DIR --format csv | head -1`: the pipe closes early.
    use std::io::BufRead as _;
    let t = tempfile::tempdir().unwrap();
    let plan = plan(t.path(), 2, "2 d");
    // 20 design points: a summary well over a pipe's 64 KiB buffer, so the
    // writer is still writing when the reader goes away.
    let text_plan = std::fs::read_to_string(&plan).unwrap() + "  demand: [0.6, 0.7, 0.8, 0.9, 1.0]\n";
    std::fs::write(&plan, text_plan).unwrap();
    let d = t.path().join("out");
    run(&["experiment", s(&plan), "--out", s(&d), "--quiet"]);
    assert!(std::fs::metadata(d.join("summary.csv")).unwrap().len() > 128 * 1024);
    let mut child = Command::new(env!("CARGO_BIN_EXE_layflow"))
        .args(["summarize", s(&d), "--format", "csv"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut first = String::new();
    std::io::BufReader::new(child.stdout.take().unwrap()).read_line(&mut first).unwrap();
    assert!(first.starts_with("point,"));
    let out = child.wait_with_output().unwrap();
    let err = text(&out.stderr);
    assert!(!err.contains("panicked"), "{err}");
    assert!(matches!(out.status.code(), Some(0) | Some(141)), "{:?}", out.status);
}

/// The plan of [`plan`] with `edit` applied to its text, in its own folder under `dir`.
fn edited(dir: &Path, name: &str, reps: u32, edit: impl Fn(String) -> String) -> PathBuf {
    let d = dir.join(name);
    std::fs::create_dir_all(&d).unwrap();
    let p = plan(&d, reps, "2 d");
    std::fs::write(&p, edit(std::fs::read_to_string(&p).unwrap())).unwrap();
    p
}

#[test]
fn raising_replications_on_resume_runs_only_the_new_units_and_matches_a_fresh_run() {
    let t = tempfile::tempdir().unwrap();
    let small = edited(t.path(), "small", 2, |s| s);
    let big = edited(t.path(), "big", 3, |s| s);
    let grown = t.path().join("grown");
    run(&["experiment", s(&small), "--out", s(&grown), "--quiet"]);
    let out = run(&["experiment", s(&big), "--out", s(&grown), "--resume", "--quiet"]);
    let err = text(&out.stderr);
    // 4 design points: 8 units kept, the 4 third replications run.
    assert!(err.contains("8 done, 4 to run") && err.contains("not 2"), "{err}");
    let fresh = t.path().join("fresh");
    let f = run(&["experiment", s(&big), "--out", s(&fresh), "--quiet"]);
    same_outputs(&grown, &fresh);
    assert_eq!(out.stdout, f.stdout, "the same table");
    assert_eq!(run(&["summarize", s(&grown)]).stdout, f.stdout);
    // Lowering them is refused, and says so.
    let out = layflow(&["experiment", s(&small), "--out", s(&grown), "--resume", "--quiet"]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("replications (3 there, 2 now)") && err.contains("only be raised"), "{err}");
}

/// A change to a plan's text.
type Edit = fn(String) -> String;

#[test]
fn a_refused_resume_names_the_setting_that_changed() {
    let t = tempfile::tempdir().unwrap();
    let base = edited(t.path(), "base", 2, |s| s);
    let d = t.path().join("d");
    run(&["experiment", s(&base), "--out", s(&d), "--quiet"]);
    let cases: [(&str, Edit, &str); 4] = [
        ("seed", |s| s.replace("seed: 11", "seed: 12"), "seed (11 there, 12 now)"),
        ("horizon", |s| s.replace("horizon: 2 d", "horizon: 3 d"), "horizon (172800 s there, 259200 s now)"),
        ("warmup", |s| s.replace("warmup: 1 d", "warmup: 12 h"), "warm-up (86400 s there, 43200 s now)"),
        (
            "levels",
            |s| s.replace("count: [1, 2]", "count: [1, 3]"),
            "levels of factor `fleets.forklifts.count` (1, 2 there, 1, 3 now)",
        ),
    ];
    for (name, edit, needle) in cases {
        let p = edited(t.path(), name, 2, edit);
        let out = layflow(&["experiment", s(&p), "--out", s(&d), "--resume", "--quiet"]);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{name}: {err}");
        assert!(err.contains("another plan or scenario version") && err.contains(needle), "{name}: {err}");
    }
    // The scenario's content: a copy of the demo whose own seed is then edited.
    let sc = t.path().join("scenario.yaml");
    let demo = std::fs::read_to_string(root().join("scenarios/demo.yaml")).unwrap();
    std::fs::write(&sc, &demo).unwrap();
    let on_copy = |name: &str| {
        edited(t.path(), name, 2, |s| {
            let first = s.lines().next().unwrap().to_string();
            s.replace(&first, &format!("scenario: {}", sc.display()))
        })
    };
    let p = on_copy("copy");
    let e = t.path().join("e");
    run(&["experiment", s(&p), "--out", s(&e), "--quiet"]);
    std::fs::write(&sc, demo.replace("seed: 20261201", "seed: 20261202")).unwrap();
    let out = layflow(&["experiment", s(&p), "--out", s(&e), "--resume", "--quiet"]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("the scenario file's content"), "{err}");
}

#[test]
fn folders_of_other_studies_are_refused_and_force_replaces_them_whole() {
    let t = tempfile::tempdir().unwrap();
    let p = plan(t.path(), 2, "2 d");
    // A comparison's files without a manifest.
    let d = t.path().join("d");
    std::fs::create_dir(&d).unwrap();
    std::fs::write(d.join("replications.csv"), "demand_factor,layout\n").unwrap();
    std::fs::write(d.join("keep.txt"), "mine").unwrap();
    for extra in [&[][..], &["--resume"][..]] {
        let mut args = vec!["experiment", s(&p), "--out", s(&d), "--quiet"];
        args.extend_from_slice(extra);
        let out = layflow(&args);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{extra:?}: {err}");
        assert!(err.contains("replications.csv") && err.contains("--force"), "{err}");
    }
    let out = run(&["experiment", s(&p), "--out", s(&d), "--quiet", "--force"]);
    assert!(text(&out.stderr).contains("deleted replications.csv"), "{}", text(&out.stderr));
    assert!(!d.join("replications.csv").exists() && d.join("keep.txt").exists());
    let whole = t.path().join("whole");
    run(&["experiment", s(&p), "--out", s(&whole), "--quiet"]);
    same_outputs(&d, &whole);
    // A finished run of the same plan is replaced only with --force.
    run(&["experiment", s(&p), "--out", s(&d), "--quiet", "--force"]);
    same_outputs(&d, &whole);

    // merge --out into a folder holding another experiment: refused, then replaced with --force.
    let other = edited(t.path(), "other", 2, |s| s.replace("seed: 11", "seed: 5"));
    let o = t.path().join("o");
    run(&["experiment", s(&other), "--out", s(&o), "--quiet"]);
    let out = layflow(&["merge", s(&whole), "--out", s(&o)]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("units.jsonl") && err.contains("--force"), "{err}");
    run(&["merge", s(&whole), "--out", s(&o), "--force"]);
    same_outputs(&o, &whole);
    // Merging into one of the shard folders themselves is allowed.
    let shards: Vec<PathBuf> = (1..=2).map(|k| t.path().join(format!("s{k}"))).collect();
    for (k, d) in shards.iter().enumerate() {
        run(&["experiment", s(&p), "--shard", &format!("{}/2", k + 1), "--out", s(d), "--quiet"]);
    }
    run(&["merge", s(&shards[0]), s(&shards[1]), "--out", s(&shards[0])]);
    same_outputs(&shards[0], &whole);
    // And merging again into a folder that holds this plan's results (a merge script rerun).
    run(&["merge", s(&shards[1]), s(&whole), "--out", s(&o)]);
    same_outputs(&o, &whole);
}

#[test]
fn summarize_refuses_a_folder_mixing_two_studies() {
    let t = tempfile::tempdir().unwrap();
    let a = t.path().join("a");
    run(&["experiment", s(&plan(t.path(), 2, "2 d")), "--out", s(&a), "--quiet"]);
    let b = t.path().join("b");
    let other = edited(t.path(), "other", 2, |s| s.replace("seed: 11", "seed: 5"));
    run(&["experiment", s(&other), "--out", s(&b), "--quiet"]);
    // Another experiment's summary.csv beside a's units.
    let mixed = t.path().join("mixed");
    std::fs::create_dir(&mixed).unwrap();
    std::fs::copy(a.join("units.jsonl"), mixed.join("units.jsonl")).unwrap();
    std::fs::copy(b.join("summary.csv"), mixed.join("summary.csv")).unwrap();
    let out = layflow(&["summarize", s(&mixed)]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("summary.csv") && err.contains("units.jsonl"), "{err}");
    // A comparison's file beside an experiment's manifest.
    std::fs::write(a.join("replications.csv"), "demand_factor,layout\n").unwrap();
    let out = layflow(&["summarize", s(&a)]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("replications.csv") && err.contains("layflow-results.json"), "{err}");
}

/// Issue 16: a plan with `by:` journals each unit's bucket values, and a
/// resumed run and a merge of shards give the same bytes as one run
/// (by_bucket.csv included); a different `by:` on resume is refused, naming it.
#[test]
fn a_plan_by_hour_of_day_resumes_and_merges_to_the_same_bytes() {
    let t = tempfile::tempdir().unwrap();
    let plan = plan(t.path(), 3, "3 d");
    let text_of = std::fs::read_to_string(&plan).unwrap();
    std::fs::write(&plan, format!("by: hour-of-day\n{text_of}")).unwrap();
    let whole = t.path().join("whole");
    let out = run(&["experiment", s(&plan), "--out", s(&whole), "--quiet"]);
    let csv = std::fs::read_to_string(whole.join("by_bucket.csv")).unwrap();
    assert_eq!(
        csv.lines().next().unwrap(),
        "point,layout,fleets.forklifts.count,bucket,scope,subject,metric,mean,half_width,n"
    );
    // Every design point has all 24 hours.
    for p in 1..=4 {
        let hours: std::collections::BTreeSet<&str> = csv
            .lines()
            .filter(|l| l.starts_with(&format!("{p},")))
            .map(|l| l.split(',').nth(3).unwrap())
            .collect();
        assert_eq!(hours.len(), 24, "point {p}");
    }
    let summary: serde_json::Value =
        serde_json::from_slice(&std::fs::read(whole.join("summary.json")).unwrap()).unwrap();
    assert!(summary["points"][0]["by_bucket"]["peak"]["wip_mean"]["bucket"].is_string());
    let peak = &summary["points"][0]["by_bucket"]["peak"];
    assert!(peak["recovery_h"].is_number() || peak["recovery_note"].is_string(), "{peak}");
    // Resumed from a journal cut after five units and a torn sixth line.
    let journal = std::fs::read(whole.join("units.jsonl")).unwrap();
    let ends: Vec<usize> =
        journal.iter().enumerate().filter(|(_, &b)| b == b'\n').map(|(i, _)| i + 1).collect();
    let cut = t.path().join("cut");
    std::fs::create_dir(&cut).unwrap();
    std::fs::write(cut.join("units.jsonl"), &journal[..ends[5] + 40]).unwrap();
    let resumed = run(&["experiment", s(&plan), "--out", s(&cut), "--resume", "--quiet"]);
    let mut files = OUTPUTS.to_vec();
    files.push("by_bucket.csv");
    for f in &files {
        assert!(
            std::fs::read(whole.join(f)).unwrap() == std::fs::read(cut.join(f)).unwrap(),
            "{f} after resume"
        );
    }
    assert_eq!(resumed.stdout, out.stdout);
    // Two shards merged.
    let mut shards = Vec::new();
    for k in 1..=2 {
        let d = t.path().join(format!("shard-{k}"));
        run(&["experiment", s(&plan), "--shard", &format!("{k}/2"), "--out", s(&d), "--quiet"]);
        shards.push(d);
    }
    let merged = t.path().join("merged");
    run(&["merge", s(&shards[0]), s(&shards[1]), "--out", s(&merged)]);
    for f in &files {
        assert!(
            std::fs::read(whole.join(f)).unwrap() == std::fs::read(merged.join(f)).unwrap(),
            "{f} after merge"
        );
    }
    assert_eq!(run(&["summarize", s(&merged)]).stdout, out.stdout);
    // The same folder resumed with another `by:` is refused, naming the field.
    std::fs::write(&plan, format!("by: day-of-week\n{text_of}")).unwrap();
    let other = layflow(&["experiment", s(&plan), "--out", s(&cut), "--resume", "--quiet"]);
    let err = text(&other.stderr);
    assert_eq!(other.status.code(), Some(2), "{err}");
    assert!(err.contains("by (hour-of-day there, day-of-week now)"), "{err}");
}
