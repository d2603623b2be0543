//! No panic on an output that cannot be written: a full stdout or stderr (`/dev/full`), a closed pipe, a file that cannot grow.
//!
//! Every command's report goes through `cli/src/output.rs`; these tests hold
//! it to its promise from the outside: stdout on `/dev/full` ends with one
//! line on stderr and exit 1; stderr on `/dev/full` changes no exit code; a
//! closed pipe leaves quietly with 141; an output file that cannot be
//! written names the file and exits 1; an experiment whose summary could not
//! be printed keeps every unit on disk. A panic would exit 101 and print
//! "panicked" with a backtrace hint.
//!
//! `/dev/full` is Linux's always-full device (every write fails with ENOSPC);
//! where it is missing the tests say so and pass without running.

mod common;

use std::fs::{File, OpenOptions};
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

use common::{root, text};

/// `/dev/full` opened for writing, or `None` with a notice naming the test.
#[allow(clippy::disallowed_macros)] // a test's notice (cli/clippy.toml keeps print! out of the program)
fn dev_full(test: &str) -> Option<File> {
    match OpenOptions::new().write(true).open("/dev/full") {
        Ok(f) => Some(f),
        Err(e) => {
            eprintln!("notice: /dev/full cannot be opened ({e}); {test} was skipped");
            None
        }
    }
}

/// Run `layflow args` from the workspace root with the given stdout and stderr (piped stderr is captured).
fn layflow_to(args: &[&str], stdout: impl Into<Stdio>, stderr: impl Into<Stdio>) -> Output {
    Command::new(env!("CARGO_BIN_EXE_layflow"))
        .args(args)
        .current_dir(root())
        .stdin(Stdio::null())
        .stdout(stdout)
        .stderr(stderr)
        .output()
        .expect("the layflow binary runs")
}

/// The run failed with exit 1 and said why in exactly one `error` line, the last
/// one on stderr (notes before it, such as an experiment's unit count, may stand),
/// containing `needle`; no panic.
fn one_line_failure(what: &str, out: &Output, needle: &str) -> String {
    let err = text(&out.stderr);
    assert!(!err.contains("panicked"), "{what} panicked:\n{err}");
    assert_eq!(out.status.code(), Some(1), "{what}: exit code; stderr:\n{err}");
    let errors: Vec<&str> = err.lines().filter(|l| l.starts_with("error")).collect();
    assert_eq!(errors.len(), 1, "{what}: one error line expected:\n{err}");
    assert_eq!(err.lines().last(), Some(errors[0]), "{what}: the error is the last line:\n{err}");
    assert!(errors[0].contains(needle), "{what}: the message should contain {needle:?}:\n{err}");
    errors[0].to_string()
}

fn s(p: &Path) -> &str {
    p.to_str().expect("utf-8 path")
}

/// A small experiment plan over the demo plant in `dir`: 2 layouts × 2 replications, 2 days each.
fn small_plan(dir: &Path) -> PathBuf {
    let p = dir.join("plan.yaml");
    let demo = root().join("scenarios/demo.yaml");
    let plan = format!(
        "scenario: {}\nreplications: 2\nseed: 5\nhorizon: 2 d\nwarmup: 12 h\nfactors:\n  layout: [current, proposed]\n",
        demo.display()
    );
    std::fs::write(&p, plan).expect("plan written");
    p
}

/// A short simulation: enough to produce a report, quick enough for a test.
const SHORT: &[&str] = &["--horizon", "2d", "--warmup", "12h", "--replications", "2", "--seed", "3", "-q"];

#[test]
fn every_command_reports_a_full_stdout_in_one_line_and_exits_1() {
    if dev_full("every_command_reports_a_full_stdout_in_one_line_and_exits_1").is_none() {
        return;
    }
    let t = tempfile::tempdir().unwrap();
    let done = t.path().join("done");
    let plan = small_plan(t.path());
    let ok = layflow_to(&["experiment", s(&plan), "--out", s(&done), "-q"], Stdio::null(), Stdio::piped());
    assert!(ok.status.success(), "the experiment for summarize and merge: {}", text(&ok.stderr));
    let merged = t.path().join("merged");
    let found = t.path().join("found.yaml");

    let with = |base: &[&str], extra: &[&str]| -> Vec<String> {
        base.iter().chain(extra).map(|a| a.to_string()).collect()
    };
    let cases: Vec<Vec<String>> = vec![
        with(&["check", "scenarios/demo.yaml"], &[]),
        with(&["check", "scenarios/demo.yaml", "--format", "json"], &[]),
        with(&["run", "scenarios/demo.yaml"], SHORT),
        with(&["run", "scenarios/demo.yaml", "--format", "json"], SHORT),
        with(&["compare", "scenarios/demo.yaml", "--format", "csv"], SHORT),
        with(&["compare", "scenarios/demo.yaml"], SHORT),
        with(&["fleet", "scenarios/demo.yaml", "--fleet", "forklifts", "--sizes", "1..2"], SHORT),
        with(
            &["fleet", "scenarios/demo.yaml", "--fleet", "forklifts", "--sizes", "1..2", "--format", "json"],
            SHORT,
        ),
        with(&["search", "scenarios/demo.yaml", "--iterations", "200", "-q", "--out", s(&found)], &[]),
        with(&["summarize", s(&done)], &[]),
        with(&["summarize", s(&done), "--format", "csv"], &[]),
        with(&["merge", s(&done), "--out", s(&merged)], &[]),
    ];
    for args in &cases {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let out = layflow_to(&args, dev_full("").unwrap(), Stdio::piped());
        one_line_failure(
            &args.join(" "),
            &out,
            "could not write the output (stdout): No space left on device",
        );
    }
    // The files written before the report stay whole: the layouts found, the merged folder.
    assert!(std::fs::read_to_string(&found).unwrap().contains("layouts:"), "search --out wrote its layouts");
    let again = layflow_to(&["summarize", s(&merged)], Stdio::piped(), Stdio::piped());
    assert!(again.status.success(), "the merged folder summarizes: {}", text(&again.stderr));
}

#[test]
fn an_experiment_whose_summary_cannot_be_printed_keeps_every_unit() {
    let Some(full) = dev_full("an_experiment_whose_summary_cannot_be_printed_keeps_every_unit") else {
        return;
    };
    let t = tempfile::tempdir().unwrap();
    let plan = small_plan(t.path());
    let (failed, whole) = (t.path().join("failed"), t.path().join("whole"));
    let out = layflow_to(&["experiment", s(&plan), "--out", s(&failed), "-q"], full, Stdio::piped());
    let line = one_line_failure("experiment > /dev/full", &out, "No space left on device");
    assert!(
        line.contains("the results are safe in")
            && line.contains(&format!("layflow summarize {}", s(&failed))),
        "the message says where the results are and how to print them: {line}"
    );
    // The same plan run to a writable stdout: its report, and its units, byte for byte.
    let ok = layflow_to(&["experiment", s(&plan), "--out", s(&whole), "-q"], Stdio::piped(), Stdio::piped());
    assert!(ok.status.success(), "{}", text(&ok.stderr));
    let units = |d: &Path| std::fs::read(d.join("units.jsonl")).expect("units.jsonl");
    assert!(units(&failed) == units(&whole), "units.jsonl is intact after the failed print");
    let again = layflow_to(&["summarize", s(&failed)], Stdio::piped(), Stdio::piped());
    assert!(again.status.success(), "summarize after the failed print: {}", text(&again.stderr));
    assert_eq!(text(&again.stdout), text(&ok.stdout), "summarize prints what the experiment would have");
}

#[test]
fn a_full_stderr_changes_no_exit_code_and_never_panics() {
    let Some(full) = dev_full("a_full_stderr_changes_no_exit_code_and_never_panics") else {
        return;
    };
    // Bad input, with nowhere to say so: still 2 (a panic would be 101).
    let bad = "scenarios/bad/acceleration-not-positive.yaml";
    let out = layflow_to(&["check", bad], Stdio::piped(), full);
    assert_eq!(out.status.code(), Some(2), "check {bad} 2>/dev/full");
    let out = layflow_to(
        &["check", "scenarios/demo.yaml", "--no-such-flag"],
        Stdio::piped(),
        dev_full("").unwrap(),
    );
    assert_eq!(out.status.code(), Some(2), "an unknown flag with 2>/dev/full");
    // A run that succeeds, with its progress, notes and warm-up line going nowhere: still 0, report whole.
    let args = ["run", "scenarios/demo.yaml", "--horizon", "2d", "--warmup", "auto", "--replications", "2"];
    let out = layflow_to(&args, Stdio::piped(), dev_full("").unwrap());
    assert_eq!(out.status.code(), Some(0), "run 2>/dev/full");
    assert!(
        text(&out.stdout).contains("== layout current =="),
        "the report is whole:\n{}",
        text(&out.stdout)
    );
    // Both full: the write error cannot be reported; the exit code says it alone.
    let out = layflow_to(&["check", "scenarios/demo.yaml"], dev_full("").unwrap(), dev_full("").unwrap());
    assert_eq!(out.status.code(), Some(1), "check >/dev/full 2>/dev/full");
}

#[test]
fn a_closed_pipe_ends_quietly_with_141() {
    // The reading end is closed before layflow starts, so its first write
    // finds the pipe broken, whatever the timing (as `layflow ... | head`
    // once head has exited). 141 = 128 + SIGPIPE, what a shell reports.
    let (reader, writer) = std::io::pipe().expect("a pipe");
    drop(reader);
    let out = layflow_to(&["check", "scenarios/demo.yaml"], writer, Stdio::piped());
    assert_eq!(out.status.code(), Some(141), "stderr:\n{}", text(&out.stderr));
    assert_eq!(text(&out.stderr), "", "a closed pipe is no error to report");
}

/// Run `layflow args` in `dir` with files limited to 1 block (`ulimit -f 1`),
/// and SIGXFSZ ignored, so a write past it fails with EFBIG ("File too large"),
/// as it would on a full disk: this works for any user, root included (for
/// whom a read-only folder is writable). `None` where there is no `sh`.
#[allow(clippy::disallowed_macros)] // a test's notice (cli/clippy.toml keeps print! out of the program)
fn with_small_files(dir: &Path, args: &[&str]) -> Option<Output> {
    let script = "trap '' XFSZ; ulimit -f 1 || exit 99; exec \"$0\" \"$@\"";
    let out = Command::new("sh")
        .arg("-c")
        .arg(script)
        .arg(env!("CARGO_BIN_EXE_layflow"))
        .args(args)
        .current_dir(dir)
        .stdin(Stdio::null())
        .output();
    match out {
        Ok(o) if o.status.code() != Some(99) => Some(o),
        _ => {
            eprintln!("notice: no sh with ulimit -f here; the output-file tests were skipped");
            None
        }
    }
}

#[test]
fn an_output_file_that_cannot_be_written_is_named_and_exits_1() {
    let t = tempfile::tempdir().unwrap();
    let r = root();
    let scenario = |n: &str| r.join("scenarios").join(n).to_str().unwrap().to_string();
    let (demo, aisles) = (scenario("demo.yaml"), scenario("aisles-demo.yaml"));
    let plan = small_plan(t.path());
    let mut short: Vec<&str> = SHORT.to_vec();
    short.retain(|a| *a != "-q");
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (vec!["draw", &aisles, "-o", "plant.svg"], "plant.svg"),
        ([&["compare", demo.as_str(), "--out", "cmp", "-q"][..], &short].concat(), "cmp/summary.json"),
        (
            [
                &["fleet", demo.as_str(), "--fleet", "forklifts", "--sizes", "1..2", "--plot", "f.svg", "-q"]
                    [..],
                &short,
            ]
            .concat(),
            "f.svg",
        ),
        (vec!["search", &demo, "--iterations", "200", "-q", "--out", "found.yaml"], "found.yaml"),
        (vec!["experiment", s(&plan), "--out", "exp", "-q"], "exp/units.jsonl"),
    ];
    for (args, file) in cases {
        let Some(out) = with_small_files(t.path(), &args) else { return };
        let line = one_line_failure(&args.join(" "), &out, file);
        assert!(line.contains("File too large"), "the reason is given: {line}");
        assert!(!line.contains("at path"), "the user's file is named, not the temporary one: {line}");
    }
    // No half header is left behind: once there is room, the same command runs afresh.
    let exp = t.path().join("exp");
    let out = layflow_to(&["experiment", s(&plan), "--out", s(&exp), "-q"], Stdio::null(), Stdio::piped());
    assert!(out.status.success(), "the experiment reruns in its folder: {}", text(&out.stderr));
}

#[test]
fn clippy_keeps_print_macros_out_of_the_program() {
    // The lint (not this test) is the guard; this keeps its configuration from being dropped unnoticed.
    let conf = std::fs::read_to_string(root().join("cli/clippy.toml")).expect("cli/clippy.toml");
    for m in ["std::print\"", "std::println\"", "std::eprint\"", "std::eprintln\""] {
        assert!(conf.contains(m), "cli/clippy.toml no longer disallows {m}");
    }
}
