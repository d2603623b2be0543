//! The shipped cluster scripts run for real: the Slurm array on a single-node Slurm (a requeued and a cancelled shard), and GNU parallel resuming a killed shard from its job log; each merges to the bytes of one uninterrupted run.
//!
//! CI starts the single-node Slurm (`tests/cluster/slurm-local.sh start`,
//! SLURM_CONF exported) and sets LAYFLOW_REQUIRE_SLURM=1 and
//! LAYFLOW_REQUIRE_PARALLEL=1, so there neither test can skip; on a machine
//! without them each skips with a notice. docs/cluster.md gives the same
//! commands for a user.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use common::{root, text};

/// The files of a finished experiment that must match a single run byte for
/// byte (runs.jsonl records who ran what and when, so it differs by design).
const OUTPUTS: &[&str] = &["units.jsonl", "results.csv", "summary.csv", "summary.json"];

/// A plan over the demo plant slow enough that a shard is still running when
/// the test interrupts it: 2 layouts × 2 fleet sizes × `reps`, `horizon` each.
fn plan(dir: &Path, reps: u32, horizon: &str) -> PathBuf {
    let p = dir.join("plan.yaml");
    let demo = root().join("scenarios/demo.yaml");
    let body = format!(
        "scenario: {}\nreplications: {reps}\nseed: 5\nhorizon: {horizon}\nwarmup: 1 d\nfactors:\n  layout: [current, proposed]\n  fleets.forklifts.count: [1, 2]\n",
        demo.display()
    );
    std::fs::write(&p, body).unwrap();
    p
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

/// PATH with the layflow binary's folder first, as a user has it installed.
fn path_with_layflow() -> String {
    let bin = Path::new(env!("CARGO_BIN_EXE_layflow")).parent().unwrap().to_path_buf();
    format!("{}:{}", bin.display(), std::env::var("PATH").unwrap_or_default())
}

fn single_run(plan: &Path, out: &Path) {
    let o = Command::new(env!("CARGO_BIN_EXE_layflow"))
        .args(["experiment", s(plan), "--out", s(out), "--quiet"])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", text(&o.stderr));
}

fn same_outputs(a: &Path, b: &Path) {
    for f in OUTPUTS {
        let x = std::fs::read(a.join(f)).unwrap_or_else(|e| panic!("{}/{f}: {e}", a.display()));
        let y = std::fs::read(b.join(f)).unwrap_or_else(|e| panic!("{}/{f}: {e}", b.display()));
        assert!(x == y, "{f} differs between {} and {}", a.display(), b.display());
    }
}

/// Units saved in a folder so far (its units.jsonl less the header line).
fn saved(dir: &Path) -> usize {
    std::fs::read_to_string(dir.join("units.jsonl")).map_or(0, |t| t.lines().count().saturating_sub(1))
}

/// Wait (polling) until `ok` holds, failing with `what` after `limit`.
fn wait_for(what: &str, limit: Duration, mut ok: impl FnMut() -> bool) {
    let t0 = Instant::now();
    while !ok() {
        assert!(t0.elapsed() < limit, "gave up after {limit:?} waiting for {what}");
        std::thread::sleep(Duration::from_millis(50));
    }
}

fn sh(cmd: &str) -> Output {
    Command::new("bash").args(["-c", cmd]).env("PATH", path_with_layflow()).output().unwrap()
}

fn ok(cmd: &str) -> String {
    let o = sh(cmd);
    assert!(o.status.success(), "{cmd}: {}{}", text(&o.stdout), text(&o.stderr));
    text(&o.stdout)
}

/// The state of a Slurm job (`PENDING`, `RUNNING`, `COMPLETED`, `CANCELLED`…).
fn job_state(job: &str) -> String {
    let out = text(&sh(&format!("scontrol show job {job}")).stdout);
    out.split_whitespace().find_map(|w| w.strip_prefix("JobState=")).unwrap_or("GONE").to_string()
}

/// Is a single-node Slurm answering? If not: a failure in CI
/// (LAYFLOW_REQUIRE_SLURM), else a notice and `false`.
#[allow(clippy::disallowed_macros)] // a test's notice (cli/clippy.toml keeps print! out of the program)
fn slurm_up() -> bool {
    let up = Command::new("sinfo")
        .args(["-h", "-o", "%a"])
        .stderr(Stdio::null())
        .output()
        .is_ok_and(|o| o.status.success() && text(&o.stdout).contains("up"));
    if !up {
        assert!(
            std::env::var_os("LAYFLOW_REQUIRE_SLURM").is_none(),
            "LAYFLOW_REQUIRE_SLURM is set but no Slurm answers `sinfo`: start one with \
             `tests/cluster/slurm-local.sh start` and export the SLURM_CONF it prints"
        );
        eprintln!(
            "NOTICE: no Slurm answers `sinfo`; the Slurm array test was not run (CI starts one: \
             tests/cluster/slurm-local.sh)"
        );
    }
    up
}

#[test]
fn the_slurm_array_merges_to_the_single_run_after_a_requeue_and_a_cancel() {
    if !slurm_up() {
        return;
    }
    let t = tempfile::tempdir().unwrap();
    // 4 design points × 32 replications of 1000 days: 32 units a shard, each
    // about 2.7 million events (0.15 s of one core on the development
    // machine). A stopped shard finishes the units it is running and starts
    // no more, so the test needs a shard to have many units not yet started
    // when it is interrupted: after its first unit is saved, a shard on 4
    // threads has at least 27 still to start, about a second of work. With 8
    // units a shard (two waves of 4 threads) a cancel that landed during the
    // second wave let the shard complete, and the test failed (seen in CI).
    const REPS: usize = 32;
    let plan = plan(t.path(), REPS as u32, "1000 d");
    let whole = t.path().join("whole");
    single_run(&plan, &whole);
    let out = t.path().join("out");
    // The shipped script, unchanged: 4 shards, at most 2 at once (the array throttle).
    let said =
        ok(&format!("{} {} 4 {} 2", s(&root().join("scenarios/cluster/submit.sh")), s(&plan), s(&out)));
    let ids: Vec<&str> = said
        .lines()
        .next()
        .and_then(|l| l.strip_prefix("submitted shards as job array "))
        .map(|l| l.split(" and the merge as job ").collect())
        .unwrap_or_else(|| panic!("submit.sh said: {said}"));
    let (array, merge) = (ids[0].to_string(), ids[1].trim().to_string());
    let shard = |k: usize| out.join(format!("shard-{k}"));
    // A requeued job waits about two minutes before it may start again (Slurm's
    // own delay); a user waits, the test makes it eligible at once.
    let start_now = |task: &str| {
        wait_for(&format!("{task} to be pending again"), Duration::from_secs(60), || {
            job_state(task) == "PENDING"
        });
        ok(&format!("scontrol update JobId={task} StartTime=now"));
    };

    // 1. A lost node: shard 1 is requeued while it runs (what Slurm does to a
    //    --requeue job whose node fails). Its units saved so far are kept.
    wait_for("shard 1 to save a unit", Duration::from_secs(120), || saved(&shard(1)) >= 1);
    assert!(saved(&shard(1)) < REPS, "shard 1 finished before it could be requeued: make the plan slower");
    ok(&format!("scontrol requeue {array}_1"));
    start_now(&format!("{array}_1"));

    // 2. A cancelled shard, then requeued by hand (docs/cluster.md, "When a shard fails").
    wait_for("shard 3 to save a unit", Duration::from_secs(180), || saved(&shard(3)) >= 1);
    assert!(saved(&shard(3)) < REPS, "shard 3 finished before it could be cancelled: make the plan slower");
    ok(&format!("scancel {array}_3"));
    wait_for("shard 3 to be cancelled", Duration::from_secs(60), || {
        job_state(&format!("{array}_3")) == "CANCELLED"
    });
    ok(&format!("scontrol requeue {array}_3"));
    start_now(&format!("{array}_3"));
    // A cancelled task fails the merge's afterok for good; the documented fix
    // points the merge at the array's tasks again.
    let tasks: Vec<String> = (1..=4).map(|k| format!("{array}_{k}")).collect();
    ok(&format!("scontrol update JobId={merge} Dependency=afterok:{}", tasks.join(":")));

    let t0 = Instant::now();
    while !matches!(job_state(&merge).as_str(), "COMPLETED" | "FAILED" | "CANCELLED" | "TIMEOUT" | "GONE") {
        // Say why it waits (its Reason= and each task's state), not only that it did.
        assert!(
            t0.elapsed() < Duration::from_secs(300),
            "gave up after 300 s waiting for the merge job to finish:\n{}\n{}",
            text(&sh(&format!("scontrol show job {merge}")).stdout),
            text(&sh(&format!("squeue --array --states=all --jobs {array},{merge}")).stdout)
        );
        std::thread::sleep(Duration::from_millis(50));
    }
    assert_eq!(
        job_state(&merge),
        "COMPLETED",
        "merge log: {:?}",
        std::fs::read_to_string(out.join("logs/merge.out"))
    );
    same_outputs(&whole, &out.join("merged"));

    // The interrupted shards resumed their own units: no unit twice, and the
    // restart's record found some already done.
    for k in [1, 3] {
        assert_eq!(saved(&shard(k)), REPS, "shard {k} holds each of its units once");
        let log = std::fs::read_to_string(out.join(format!("logs/shard-{k}.out"))).unwrap();
        assert_eq!(log.matches("== shard").count(), 2, "shard {k} ran twice, both in its log: {log}");
        let runs = std::fs::read_to_string(shard(k).join("runs.jsonl")).unwrap();
        let last: serde_json::Value = serde_json::from_str(runs.lines().last().unwrap()).unwrap();
        assert_eq!(last["outcome"], "complete", "{runs}");
        assert!(last["found_done"].as_u64().unwrap() >= 1, "the restart resumed, not restarted: {runs}");
        assert_eq!(last["restarts"], 1, "{runs}");
        assert_eq!(last["job"], format!("{array}_{k}"), "{runs}");
    }
    // The cancelled run saved its running units and said so.
    let runs3 = std::fs::read_to_string(shard(3).join("runs.jsonl")).unwrap();
    assert!(runs3.lines().next().unwrap().contains("\"outcome\":\"stopped\""), "{runs3}");
    // The merged folder gathers every shard's records; summarize shows them slowest first.
    let sum = ok(&format!("layflow summarize {} --runs", s(&out.join("merged"))));
    assert!(sum.contains("Runs recorded in runs.jsonl, slowest first"), "{sum}");
    assert!(sum.contains(&format!("{array}_3 (restart 1)")), "{sum}");
}

#[allow(clippy::disallowed_macros)] // a test's notice (cli/clippy.toml keeps print! out of the program)
#[test]
fn gnu_parallel_reruns_only_a_killed_shard_from_its_job_log() {
    if Command::new("parallel").arg("--version").stdout(Stdio::null()).status().is_err() {
        assert!(
            std::env::var_os("LAYFLOW_REQUIRE_PARALLEL").is_none(),
            "LAYFLOW_REQUIRE_PARALLEL is set but GNU parallel is not installed"
        );
        eprintln!("NOTICE: GNU parallel is not installed; the job-log resume was not run (CI installs it)");
        return;
    }
    let t = tempfile::tempdir().unwrap();
    let plan = plan(t.path(), 6, "400 d");
    let whole = t.path().join("whole");
    single_run(&plan, &whole);
    let out = t.path().join("out");
    let script = format!("{} {} 3 {}", s(&root().join("scenarios/cluster/parallel.sh")), s(&plan), s(&out));
    let first = Command::new("bash")
        .args(["-c", &script])
        .env("PATH", path_with_layflow())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let shard2 = out.join("shard-2");
    wait_for("shard 2 to save a unit", Duration::from_secs(120), || saved(&shard2) >= 1);
    // A hard kill (no chance to save running units), as an out-of-memory kill or a dead ssh link.
    let pattern = format!("--out {}", s(&shard2));
    let killed = Command::new("pkill").args(["-KILL", "-f", "--", &pattern]).status().unwrap();
    assert!(killed.success(), "no shard 2 process to kill");
    let o = first.wait_with_output().unwrap();
    assert!(!o.status.success(), "the batch must fail when a shard is killed: {}", text(&o.stderr));
    let saved_before = saved(&shard2);
    assert!(saved_before < 8, "shard 2 finished before it was killed: make the plan slower");
    // The same command again: only the failed shard (and any never started) runs.
    let again = sh(&script);
    assert!(again.status.success(), "{}", text(&again.stderr));
    same_outputs(&whole, &out.join("merged"));
    let joblog = std::fs::read_to_string(out.join("logs/parallel.joblog")).unwrap();
    let runs_of = |k: usize| joblog.lines().filter(|l| l.contains(&format!("shard-{k} "))).count();
    assert_eq!(runs_of(1), 1, "shard 1 succeeded and was not rerun: {joblog}");
    assert_eq!(runs_of(2), 2, "shard 2 was killed and rerun once: {joblog}");
    let runs = std::fs::read_to_string(shard2.join("runs.jsonl")).unwrap();
    let last: serde_json::Value = serde_json::from_str(runs.lines().last().unwrap()).unwrap();
    assert_eq!(last["found_done"].as_u64().unwrap(), saved_before as u64, "{runs}");
}

#[test]
fn each_run_is_recorded_and_merge_gathers_the_shards_records() {
    let t = tempfile::tempdir().unwrap();
    let plan = plan(t.path(), 2, "2 d");
    let layflow = |args: &[&str], env: &[(&str, &str)]| {
        let mut c = Command::new(env!("CARGO_BIN_EXE_layflow"));
        c.args(args);
        for (k, v) in env {
            c.env(k, v);
        }
        c.output().unwrap()
    };
    let (a, b, m) = (t.path().join("a"), t.path().join("b"), t.path().join("m"));
    for (k, dir, env) in [
        ("1/2", &a, vec![]),
        (
            "2/2",
            &b,
            vec![("SLURM_ARRAY_JOB_ID", "4711"), ("SLURM_ARRAY_TASK_ID", "2"), ("SLURM_RESTART_COUNT", "1")],
        ),
    ] {
        let o = layflow(&["experiment", s(&plan), "--shard", k, "--out", s(dir), "--quiet"], &env);
        assert!(o.status.success(), "{}", text(&o.stderr));
    }
    // A second run on a finished shard adds a line that ran nothing.
    let o = layflow(&["experiment", s(&plan), "--shard", "1/2", "--out", s(&a), "--resume", "--quiet"], &[]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let o = layflow(&["merge", s(&a), s(&b), "--out", s(&m)], &[]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let lines: Vec<serde_json::Value> = std::fs::read_to_string(m.join("runs.jsonl"))
        .unwrap()
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 3, "{lines:?}");
    assert_eq!((lines[0]["shard"].as_str(), lines[0]["ran"].as_u64()), (Some("1/2"), Some(4)));
    assert_eq!((lines[1]["found_done"].as_u64(), lines[1]["ran"].as_u64()), (Some(4), Some(0)));
    assert_eq!((lines[2]["job"].as_str(), lines[2]["restarts"].as_u64()), (Some("4711_2"), Some(1)));
    for l in &lines {
        assert_eq!(l["outcome"], "complete");
        assert!(l["events"].as_u64().unwrap() > 0 || l["ran"] == 0, "{l}");
    }
    // Merging again into the same folder repeats no record.
    let o = layflow(&["merge", s(&a), s(&b), "--out", s(&m)], &[]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert_eq!(std::fs::read_to_string(m.join("runs.jsonl")).unwrap().lines().count(), 3);
    // The summary stays the run's table; the runs are a note there and a view of their own.
    let sum = layflow(&["summarize", s(&m)], &[]);
    assert!(!text(&sum.stdout).contains("Runs recorded"), "{}", text(&sum.stdout));
    assert!(text(&sum.stderr).contains("3 runs recorded in runs.jsonl"), "{}", text(&sum.stderr));
    let table = text(&layflow(&["summarize", s(&m), "--runs"], &[]).stdout);
    assert!(table.contains("4711_2 (restart 1)") && table.contains("slowest first (3)"), "{table}");
    let csv = text(&layflow(&["summarize", s(&m), "--runs", "--format", "csv"], &[]).stdout);
    let rows: Vec<&str> = csv.lines().collect();
    assert_eq!(rows.len(), 4, "{csv}");
    assert!(rows.iter().all(|r| r.split(',').count() == 13), "every row has every column: {csv}");
    // A folder without records says where they come from, exit 2.
    let whole = t.path().join("whole");
    single_run(&plan, &whole);
    std::fs::remove_file(whole.join("runs.jsonl")).unwrap();
    let o = layflow(&["summarize", s(&whole), "--runs"], &[]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert!(text(&o.stderr).contains("no runs.jsonl here"), "{}", text(&o.stderr));
}
