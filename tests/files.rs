//! Files, scans and writes through the command line: bounded inputs, write errors on standard
//! output, Ctrl-C during a scan, short numbers in messages, and outputs that appear only when
//! the whole command succeeds (never a half-written file or a temporary left behind).

#![cfg(unix)]

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

fn repo(path: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join(path)
        .display()
        .to_string()
}

/// A fresh scratch folder for one test.
fn scratch(name: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("files-{name}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// The command, under a 1 GiB address-space limit so an unbounded read fails the test
/// instead of the machine.
fn command(args: &[&str]) -> Command {
    use std::os::unix::process::CommandExt;
    let mut c = Command::new(env!("CARGO_BIN_EXE_umbral"));
    // Few threads, so the limit bounds the data and not the machine's size.
    c.args(args)
        .stdin(Stdio::null())
        .env("RAYON_NUM_THREADS", "2");
    // SAFETY: only setrlimit, async-signal-safe, between fork and exec.
    unsafe {
        c.pre_exec(|| {
            let limit = libc::rlimit {
                rlim_cur: 1 << 30,
                rlim_max: 1 << 30,
            };
            if libc::setrlimit(libc::RLIMIT_AS, &limit) != 0 {
                return Err(std::io::Error::last_os_error());
            }
            Ok(())
        });
    }
    c
}

/// `words` split at spaces, then `extra` as they are (paths may hold spaces).
fn args(words: &str, extra: &[&str]) -> Vec<String> {
    words
        .split_whitespace()
        .chain(extra.iter().copied())
        .map(String::from)
        .collect()
}

/// `&[String]` as `Vec<&str>`.
fn strs(v: &[String]) -> Vec<&str> {
    v.iter().map(String::as_str).collect()
}

fn run(args: &[&str]) -> Output {
    command(args).output().expect("run umbral")
}

/// Run with standard output going to /dev/full (a full disk).
fn run_to_full_disk(args: &[&str]) -> Output {
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .expect("/dev/full");
    command(args)
        .stdout(full)
        .stderr(Stdio::piped())
        .output()
        .expect("run umbral")
}

/// Exit code 2, exactly one line on stderr containing every needle, no panic.
fn assert_error(out: &Output, needles: &[&str], what: &str) -> String {
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(out.status.code(), Some(2), "{what}: {stderr}");
    assert_eq!(stderr.trim_end().lines().count(), 1, "{what}: {stderr}");
    assert!(!stderr.contains("panicked"), "{what}: {stderr}");
    for n in needles {
        assert!(stderr.contains(n), "{what}: '{stderr}' lacks '{n}'");
    }
    stderr
}

/// A sparse file of `bytes` bytes.
fn big_file(path: &Path, bytes: u64) {
    std::fs::File::create(path).unwrap().set_len(bytes).unwrap();
}

#[test]
fn dev_zero_and_oversized_inputs_are_refused_with_the_cap() {
    let dir = scratch("inputs");
    let d = |name: &str| dir.join(name).display().to_string();
    let (big, big_scan) = (d("big.toml"), d("big.jsonl"));
    let (folder, pipe) = (d("folder.toml"), d("pipe.toml"));
    let not_regular = "not a regular file (it is a character device)";
    let cap = "larger than 4 MiB, the limit for an input file";
    let shadow = "shadow --inclination 30 --metric-file";
    let bound = "bound --metric reissner-nordstrom --vary q=0:1 --measurement";
    let scan = "scan --metric kerr --grid a=0:0.5:3 --inclination 30 --out";
    let cases = [
        (args(shadow, &["/dev/zero"]), not_regular),
        (args("verify /dev/zero", &[]), not_regular),
        (args(bound, &["/dev/zero"]), not_regular),
        (args(scan, &["/dev/full"]), not_regular),
        (args(shadow, &[&big]), cap),
        (args("verify", &[&big]), cap),
        (args(bound, &[&big]), cap),
        (
            args(shadow, &[&folder]),
            "not a regular file (it is a folder)",
        ),
        (args(shadow, &[&pipe]), "not a regular file (it is a pipe)"),
        (
            args(scan, &[&big_scan]),
            "the most a scan file of this grid holds",
        ),
    ];
    big_file(Path::new(&big), 5 << 20);
    big_file(Path::new(&big_scan), 5 << 20);
    std::fs::create_dir_all(&folder).unwrap();
    let fifo = std::ffi::CString::new(pipe.clone()).unwrap();
    // SAFETY: a valid NUL-terminated path.
    assert_eq!(unsafe { libc::mkfifo(fifo.as_ptr(), 0o600) }, 0);
    for (a, needle) in &cases {
        assert_error(&run(&strs(a)), &[needle], &format!("{a:?}"));
    }
    // The scan file over the cap is left alone.
    assert_eq!(std::fs::metadata(&big_scan).unwrap().len(), 5 << 20);
    // A metrics folder lists an oversized file as unreadable, and is not read in full.
    let listing_dir = scratch("inputs-listing");
    big_file(&listing_dir.join("huge.toml"), 5 << 20);
    let out = run(&[
        "metrics",
        "--metrics-dir",
        &listing_dir.display().to_string(),
    ]);
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(0));
    assert!(
        stdout.contains("huge.toml") && stdout.contains("larger than 4 MiB"),
        "{stdout}"
    );
}

#[test]
fn writing_to_a_full_disk_is_an_error_not_a_panic() {
    let dir = scratch("full");
    let out_file = dir.join("s.jsonl").display().to_string();
    let checks = repo("tests/checks/schwarzschild.toml");
    let radius = repo("examples/measurement_radius.toml");
    let scan = args(
        "scan --metric kerr --grid a=0:0.5:3 --inclination 30 --out",
        &[&out_file],
    );
    let cases = [
        args("shadow --metric kerr --set a=0.5 --inclination 30", &[]),
        args("shadow --metric kerr --inclination 30 --json", &[]),
        args("verify", &[&checks]),
        args("verify --json", &[&checks]),
        args("metrics", &[]),
        args("metrics --json", &[]),
        args("geometry --metric kerr --r 5 --theta 1", &[]),
        args(
            "bound --metric reissner-nordstrom --vary q=0:1.2 --measurement",
            &[&radius],
        ),
        scan.clone(),
        args("--help", &[]),
    ];
    for a in &cases {
        assert_error(
            &run_to_full_disk(&strs(a)),
            &["cannot write to standard output", "No space left on device"],
            &format!("{a:?}"),
        );
    }
    // The scan's points are its checkpoint: kept, and a rerun resumes them.
    let out = run(&strs(&scan));
    assert!(
        String::from_utf8_lossy(&out.stdout).contains("0 computed, 3 kept"),
        "{out:?}"
    );
}

#[test]
fn ctrl_c_says_how_far_the_scan_got_and_how_to_resume() {
    let dir = scratch("ctrl-c");
    let out_file = dir.join("s.jsonl");
    let reference = dir.join("reference.jsonl");
    let scan = |out: &Path| {
        args(
            "scan --metric kerr-newman --grid a=0:0.9:30 --grid q=0:0.4:30 --inclination 50 --out",
            &[&out.display().to_string()],
        )
    };
    let a = scan(&out_file);
    let child = command(&strs(&a))
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // Interrupt once a few points are on disk.
    let lines = || {
        std::fs::read_to_string(&out_file)
            .map(|t| t.lines().count())
            .unwrap_or(0)
    };
    while lines() < 6 {
        std::thread::sleep(std::time::Duration::from_millis(5));
    }
    // SAFETY: signalling our own child.
    assert_eq!(unsafe { libc::kill(child.id() as i32, libc::SIGINT) }, 0);
    let out = child.wait_with_output().unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(out.status.code(), Some(130), "{stderr}");
    let last = stderr.trim_end().lines().last().unwrap_or("").to_string();
    assert!(
        last.starts_with("interrupted after ") && last.contains(" of 900 points"),
        "{stderr}"
    );
    assert!(
        last.contains("rerun the same command to resume"),
        "{stderr}"
    );
    assert!(last.contains(&out_file.display().to_string()), "{stderr}");
    assert!(!stderr.contains("error:"), "{stderr}");
    let done: usize = last["interrupted after ".len()..]
        .split(' ')
        .next()
        .unwrap()
        .parse()
        .unwrap();
    assert!(done < 900, "{stderr}");
    assert_eq!(lines(), done + 1, "every finished point is on disk");
    assert!(
        common::listing(&dir) == ["s.jsonl"],
        "{:?}",
        common::listing(&dir)
    );
    // The same command resumes, and the result equals an uninterrupted run.
    let resumed = run(&strs(&a));
    let stdout = String::from_utf8_lossy(&resumed.stdout);
    assert!(
        stdout.contains(&format!("{} computed, {done} kept", 900 - done)),
        "{stdout}"
    );
    assert_eq!(run(&strs(&scan(&reference))).status.code(), Some(0));
    assert!(std::fs::read(&out_file).unwrap() == std::fs::read(&reference).unwrap());
}

#[test]
fn extreme_numbers_in_messages_are_short() {
    let dir = scratch("numbers");
    let measurement = dir.join("m.toml");
    std::fs::write(
        &measurement,
        "label = \"invented\"\n[size.shadow_radius]\nintervals = [ { confidence = 0.68, low = 4.6, high = 5.2 } ]\n[circularity]\nmax = -1e-300\n",
    )
    .unwrap();
    let m = measurement.display().to_string();
    let shadow = "shadow --metric schwarzschild --inclination 30";
    let bound = "bound --metric reissner-nordstrom --measurement";
    let cases = [
        (
            args("shadow --metric kerr --inclination 1e300", &[]),
            "got 1e300",
        ),
        (
            args(shadow, &["--observer-radius", "-1e-300"]),
            "got -1e-300",
        ),
        (
            args(shadow, &["--observer-radius", "-0"]),
            "must be positive, got 0",
        ),
        (
            args("shadow --metric jnw --set nu=1e308 --inclination 30", &[]),
            "parameter 'nu' = 1e308 is outside its domain (0, 1]",
        ),
        (
            args(bound, &[&m, "--vary", "q=0:1"]),
            "circularity.max must be positive, got -1e-300",
        ),
        (
            args(bound, &[&m, "--vary", "q=1e300:1"]),
            "need LO < HI, got 1e300:1",
        ),
        (
            args(
                "scan --metric kerr --inclination 30 --out x.jsonl --grid",
                &["a=1e-300:-1e300:3"],
            ),
            "got 1e-300:-1e300:3",
        ),
    ];
    for (a, needle) in &cases {
        let stderr = assert_error(&run(&strs(a)), &[needle], &format!("{a:?}"));
        assert!(
            stderr.len() < 200,
            "{a:?}: {} bytes: {stderr}",
            stderr.len()
        );
        assert!(
            !stderr.contains("-0 ") && !stderr.contains("000000"),
            "{stderr}"
        );
    }
}

#[test]
fn csv_is_not_left_half_written_when_plot_fails() {
    let dir = scratch("csv-plot");
    let csv = dir.join("curve.csv").display().to_string();
    std::fs::write(&csv, "an earlier file\n").unwrap();
    let family = "shadow --metric kerr --set a=0.5,0.9 --inclination 30 --csv";
    let out = run(&strs(&args(
        family,
        &[&csv, "--plot", "/nonexistent-dir/x.svg"],
    )));
    assert_error(
        &out,
        &["cannot write figure '/nonexistent-dir/x.svg'"],
        "plot",
    );
    assert_eq!(
        std::fs::read_to_string(&csv).unwrap(),
        "an earlier file\n",
        "the existing CSV is untouched"
    );
    assert_eq!(common::listing(&dir), ["curve.csv"]);
    // A failure after the CSV and figure were made (the table cannot be printed): neither
    // file appears; on success both appear, with nothing else beside them.
    let fresh = scratch("csv-plot-late");
    let (c, p) = (
        fresh.join("c.csv").display().to_string(),
        fresh.join("c.svg").display().to_string(),
    );
    let one = args(
        "shadow --metric kerr --inclination 30 --csv",
        &[&c, "--plot", &p],
    );
    let out = run_to_full_disk(&strs(&one));
    assert_error(&out, &["cannot write to standard output"], "late failure");
    assert!(
        common::listing(&fresh).is_empty(),
        "{:?}",
        common::listing(&fresh)
    );
    assert_eq!(run(&strs(&one)).status.code(), Some(0));
    assert_eq!(common::listing(&fresh), ["c.csv", "c.svg"]);
}

#[test]
fn no_command_leaves_a_temporary_behind_on_failure() {
    let radius = repo("examples/measurement_radius.toml");
    let dir = scratch("no-temporaries");
    let at = |name: &str| dir.join(name).display().to_string();
    let checks = at("checks.toml");
    std::fs::copy(repo("tests/checks/schwarzschild.toml"), &checks).unwrap();
    let (a_csv, a_svg, b_svg, c_jsonl, c_svg) = (
        at("a.csv"),
        at("a.svg"),
        at("b.svg"),
        at("c.jsonl"),
        at("c.svg"),
    );
    // (command, what is in its folder after it failed late)
    let cases = [
        (
            args(
                "shadow --metric kerr --inclination 30 --csv",
                &[&a_csv, "--plot", &a_svg],
            ),
            vec!["checks.toml"],
        ),
        (
            args(
                "bound --metric reissner-nordstrom --vary q=0:1.2 --measurement",
                &[&radius, "--plot", &b_svg],
            ),
            vec!["checks.toml"],
        ),
        (
            args(
                "scan --metric kerr-newman --grid a=0:0.5:3 --grid q=0:0.5:3 --inclination 30",
                &[
                    "--measurement",
                    &radius,
                    "--out",
                    &c_jsonl,
                    "--plot",
                    &c_svg,
                ],
            ),
            // The points file is the scan's checkpoint (kept to resume); the map is not.
            vec!["c.jsonl", "checks.toml"],
        ),
        (
            args("verify --update", &[&checks]),
            vec!["c.jsonl", "checks.toml"],
        ),
    ];
    for (a, survivors) in &cases {
        let out = run_to_full_disk(&strs(a));
        assert_error(
            &out,
            &["cannot write to standard output"],
            &format!("{a:?}"),
        );
        assert_eq!(&common::listing(&dir), survivors, "{a:?}");
    }
    // The demo fails late when one of its files cannot be written: none of the others
    // appears, and the folder it created is removed again. (Quiet: its posterior runs long
    // enough to report progress on stderr, which must hold the error line only.)
    let demo = scratch("no-temporaries-demo").join("out");
    let demo_args = args("--quiet demo --out", &[&demo.display().to_string()]);
    std::fs::create_dir_all(demo.join("report.md")).unwrap();
    assert_error(&run(&strs(&demo_args)), &["report.md", "a folder"], "demo");
    assert_eq!(common::listing(&demo), ["report.md"]);
    std::fs::remove_dir(demo.join("report.md")).unwrap();
    std::fs::remove_dir(&demo).unwrap();
    let out = run_to_full_disk(&strs(&demo_args));
    assert_error(&out, &["cannot write to standard output"], "demo");
    assert!(!demo.exists(), "{:?}", common::listing(&demo));
}
