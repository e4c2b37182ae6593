//! Files, scans and writes through the command line: bounded inputs, write errors on standard
//! output, Ctrl-C during a scan, short numbers in messages, and outputs that appear only when
//! the whole command succeeds (never a half-written file or a temporary left behind).

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
    c.args(args).stdin(Stdio::null());
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

/// Every entry of `dir`, sorted.
fn listing(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

/// A sparse file of `bytes` bytes.
fn big_file(path: &Path, bytes: u64) {
    std::fs::File::create(path).unwrap().set_len(bytes).unwrap();
}

#[test]
fn dev_zero_and_oversized_inputs_are_refused_with_the_cap() {
    let dir = scratch("inputs");
    let d = |name: &str| dir.join(name).display().to_string();
    let not_regular = "not a regular file (it is a character device)";
    let cases: Vec<(Vec<String>, &str)> = vec![
        (
            vec![
                "shadow",
                "--metric-file",
                "/dev/zero",
                "--inclination",
                "30",
            ],
            not_regular,
        ),
        (vec!["verify", "/dev/zero"], not_regular),
        (
            vec!["bound", "--metric", "kerr", "--vary", "a=0:0.9"]
                .into_iter()
                .chain(["--inclination", "30", "--measurement", "/dev/zero"])
                .collect::<Vec<_>>(),
            not_regular,
        ),
        (
            vec!["scan", "--metric", "kerr", "--grid", "a=0:0.5:3"]
                .into_iter()
                .chain(["--inclination", "30", "--out", "/dev/full"])
                .collect::<Vec<_>>(),
            not_regular,
        ),
        (
            vec![
                "shadow",
                "--metric-file",
                &d("big.toml"),
                "--inclination",
                "30",
            ],
            "larger than 4 MiB, the limit for an input file",
        ),
        (
            vec!["verify", &d("big.toml")],
            "larger than 4 MiB, the limit for an input file",
        ),
        (
            vec![
                "shadow",
                "--metric-file",
                &d("folder.toml"),
                "--inclination",
                "30",
            ],
            "not a regular file (it is a folder)",
        ),
        (
            vec![
                "shadow",
                "--metric-file",
                &d("pipe.toml"),
                "--inclination",
                "30",
            ],
            "not a regular file (it is a pipe)",
        ),
        (
            vec!["bound", "--metric", "reissner-nordstrom", "--vary", "q=0:1"]
                .into_iter()
                .chain(["--measurement", &d("big.toml")])
                .collect::<Vec<_>>(),
            "larger than 4 MiB",
        ),
        (
            vec!["scan", "--metric", "kerr", "--grid", "a=0:0.5:3"]
                .into_iter()
                .chain(["--inclination", "30", "--out", &d("big.jsonl")])
                .collect::<Vec<_>>(),
            "larger than",
        ),
    ]
    .into_iter()
    .map(|(args, needle)| (args.into_iter().map(String::from).collect(), needle))
    .collect();
    big_file(&dir.join("big.toml"), 5 << 20);
    big_file(&dir.join("big.jsonl"), 5 << 20);
    std::fs::create_dir_all(dir.join("folder.toml")).unwrap();
    let fifo = std::ffi::CString::new(d("pipe.toml")).unwrap();
    // SAFETY: a valid NUL-terminated path.
    assert_eq!(unsafe { libc::mkfifo(fifo.as_ptr(), 0o600) }, 0);
    for (args, needle) in &cases {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        assert_error(&run(&args), &[needle], &format!("{args:?}"));
    }
    // The scan file over the cap is left alone.
    assert_eq!(
        std::fs::metadata(dir.join("big.jsonl")).unwrap().len(),
        5 << 20
    );
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
    let cases: Vec<Vec<&str>> = vec![
        vec![
            "shadow",
            "--metric",
            "kerr",
            "--set",
            "a=0.5",
            "--inclination",
            "30",
        ],
        vec![
            "shadow",
            "--metric",
            "kerr",
            "--inclination",
            "30",
            "--json",
        ],
        vec!["verify", &checks],
        vec!["verify", &checks, "--json"],
        vec!["metrics"],
        vec!["metrics", "--json"],
        vec!["geometry", "--metric", "kerr", "--r", "5", "--theta", "1"],
        vec![
            "bound",
            "--metric",
            "reissner-nordstrom",
            "--vary",
            "q=0:1.2",
            "--measurement",
            &radius,
        ],
        vec![
            "scan",
            "--metric",
            "kerr",
            "--grid",
            "a=0:0.5:3",
            "--inclination",
            "30",
            "--out",
            &out_file,
        ],
        vec!["--help"],
    ];
    for args in &cases {
        assert_error(
            &run_to_full_disk(args),
            &["cannot write to standard output", "No space left on device"],
            &format!("{args:?}"),
        );
    }
    // The scan's points are its checkpoint: kept, and a rerun resumes them.
    let out = run(&[
        "scan",
        "--metric",
        "kerr",
        "--grid",
        "a=0:0.5:3",
        "--inclination",
        "30",
        "--out",
        &out_file,
    ]);
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
    let args = |out: &Path| -> Vec<String> {
        [
            "scan",
            "--metric",
            "kerr-newman",
            "--grid",
            "a=0:0.9:30",
            "--grid",
            "q=0:0.4:30",
            "--inclination",
            "50",
            "--out",
        ]
        .iter()
        .map(|s| s.to_string())
        .chain([out.display().to_string()])
        .collect()
    };
    let strs = |v: &[String]| v.iter().map(String::clone).collect::<Vec<_>>();
    let a = strs(&args(&out_file));
    let a: Vec<&str> = a.iter().map(String::as_str).collect();
    let child = command(&a)
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
    assert!(listing(&dir) == ["s.jsonl"], "{:?}", listing(&dir));
    // The same command resumes, and the result equals an uninterrupted run.
    let resumed = run(&a);
    let stdout = String::from_utf8_lossy(&resumed.stdout);
    assert!(
        stdout.contains(&format!("{} computed, {done} kept", 900 - done)),
        "{stdout}"
    );
    let r = strs(&args(&reference));
    let r: Vec<&str> = r.iter().map(String::as_str).collect();
    assert_eq!(run(&r).status.code(), Some(0));
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
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (
            vec!["shadow", "--metric", "kerr", "--inclination", "1e300"],
            "got 1e300",
        ),
        (
            vec!["shadow", "--metric", "schwarzschild", "--inclination", "30"]
                .into_iter()
                .chain(["--observer-radius", "-1e-300"])
                .collect(),
            "got -1e-300",
        ),
        (
            vec!["shadow", "--metric", "schwarzschild", "--inclination", "30"]
                .into_iter()
                .chain(["--observer-radius", "-0"])
                .collect(),
            "must be positive, got 0",
        ),
        (
            vec!["shadow", "--metric", "jnw", "--set", "nu=1e308"]
                .into_iter()
                .chain(["--inclination", "30"])
                .collect(),
            "parameter 'nu' = 1e308 is outside its domain (0, 1]",
        ),
        (
            vec!["bound", "--metric", "reissner-nordstrom", "--vary", "q=0:1"]
                .into_iter()
                .chain(["--measurement", &m])
                .collect(),
            "circularity.max must be positive, got -1e-300",
        ),
        (
            vec![
                "bound",
                "--metric",
                "reissner-nordstrom",
                "--vary",
                "q=1e300:1",
            ]
            .into_iter()
            .chain(["--measurement", &m])
            .collect(),
            "need LO < HI, got 1e300:1",
        ),
        (
            vec!["scan", "--metric", "kerr", "--grid", "a=1e-300:-1e300:3"]
                .into_iter()
                .chain(["--inclination", "30", "--out", "x.jsonl"])
                .collect(),
            "got 1e-300:-1e300:3",
        ),
    ];
    for (args, needle) in &cases {
        let stderr = assert_error(&run(args), &[needle], &format!("{args:?}"));
        assert!(
            stderr.len() < 200,
            "{args:?}: {} bytes: {stderr}",
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
    let csv = dir.join("curve.csv");
    std::fs::write(&csv, "an earlier file\n").unwrap();
    let out = run(&[
        "shadow",
        "--metric",
        "kerr",
        "--set",
        "a=0.5,0.9",
        "--inclination",
        "30",
        "--csv",
        &csv.display().to_string(),
        "--plot",
        "/nonexistent-dir/x.svg",
    ]);
    assert_error(
        &out,
        &["cannot write plot '/nonexistent-dir/x.svg'"],
        "plot",
    );
    assert_eq!(
        std::fs::read_to_string(&csv).unwrap(),
        "an earlier file\n",
        "the existing CSV is untouched"
    );
    assert_eq!(listing(&dir), ["curve.csv"]);
    // A failure after the CSV and figure were made (the table cannot be printed): neither
    // file appears.
    let fresh = scratch("csv-plot-late");
    let out = run_to_full_disk(&[
        "shadow",
        "--metric",
        "kerr",
        "--inclination",
        "30",
        "--csv",
        &fresh.join("c.csv").display().to_string(),
        "--plot",
        &fresh.join("c.svg").display().to_string(),
    ]);
    assert_error(&out, &["cannot write to standard output"], "late failure");
    assert!(listing(&fresh).is_empty(), "{:?}", listing(&fresh));
    // And on success both appear, with nothing else beside them.
    let out = run(&[
        "shadow",
        "--metric",
        "kerr",
        "--inclination",
        "30",
        "--csv",
        &fresh.join("c.csv").display().to_string(),
        "--plot",
        &fresh.join("c.svg").display().to_string(),
    ]);
    assert_eq!(out.status.code(), Some(0));
    assert_eq!(listing(&fresh), ["c.csv", "c.svg"]);
}

#[test]
fn no_command_leaves_a_temporary_behind_on_failure() {
    let radius = repo("examples/measurement_radius.toml");
    // (command, files it would write in its folder, what survives the failure)
    type Case = (Vec<String>, Vec<&'static str>);
    let dir = scratch("no-temporaries");
    let at = |name: &str| dir.join(name).display().to_string();
    let checks = dir.join("checks.toml");
    std::fs::copy(repo("tests/checks/schwarzschild.toml"), &checks).unwrap();
    let s = |v: &[&str]| v.iter().map(|x| x.to_string()).collect::<Vec<_>>();
    let cases: Vec<Case> = vec![
        (
            s(&["shadow", "--metric", "kerr", "--inclination", "30"])
                .into_iter()
                .chain(s(&["--csv", &at("a.csv"), "--plot", &at("a.svg")]))
                .collect(),
            vec!["checks.toml"],
        ),
        (
            s(&[
                "bound",
                "--metric",
                "reissner-nordstrom",
                "--vary",
                "q=0:1.2",
            ])
            .into_iter()
            .chain(s(&["--measurement", &radius, "--plot", &at("b.svg")]))
            .collect(),
            vec!["checks.toml"],
        ),
        (
            s(&["scan", "--metric", "kerr-newman", "--grid", "a=0:0.5:3"])
                .into_iter()
                .chain(s(&["--grid", "q=0:0.5:3", "--inclination", "30"]))
                .chain(s(&["--measurement", &radius, "--out", &at("c.jsonl")]))
                .chain(s(&["--plot", &at("c.svg")]))
                .collect(),
            // The points file is the scan's checkpoint (kept to resume); the map is not.
            vec!["c.jsonl", "checks.toml"],
        ),
        (
            s(&["verify", &checks.display().to_string(), "--update"]),
            vec!["c.jsonl", "checks.toml"],
        ),
    ];
    for (args, survivors) in &cases {
        let a: Vec<&str> = args.iter().map(String::as_str).collect();
        let out = run_to_full_disk(&a);
        assert_error(
            &out,
            &["cannot write to standard output"],
            &format!("{a:?}"),
        );
        assert_eq!(&listing(&dir), survivors, "{a:?}");
    }
    // The demo fails late when one of its files cannot be written: none of the others
    // appears, and the folder it created is removed again.
    let demo = scratch("no-temporaries-demo").join("out");
    std::fs::create_dir_all(demo.join("report.md")).unwrap();
    let out = run(&["demo", "--out", &demo.display().to_string()]);
    assert_error(&out, &["report.md", "a folder"], "demo");
    assert_eq!(listing(&demo), ["report.md"]);
    std::fs::remove_dir(demo.join("report.md")).unwrap();
    std::fs::remove_dir(&demo).unwrap();
    let out = run_to_full_disk(&["demo", "--out", &demo.display().to_string()]);
    assert_error(&out, &["cannot write to standard output"], "demo");
    assert!(!demo.exists(), "{:?}", listing(&demo));
}
