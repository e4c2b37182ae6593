//! Runs past one process without MPI: the shards of a job array (`--shard K/N`) of a scan, of
//! the tables `infer` builds, of an image and of a calibration, joined by `umbral merge` into
//! the bytes one process writes; a shard killed part-way (SIGKILL) and rerun; and the merge's
//! one-line errors for a missing, duplicated, incomplete or foreign shard (exit code 2).
//!
//! The scans are small so that each runs in seconds: a separable metric (Kerr–Newman, the
//! separable solver) and a ray-traced one (Johannsen–Psaltis from 64 curve points, whose
//! grid reaches points without a horizon, so the scan mixes instant and slow points).

mod common;

use common::{point_lines_on_disk, scratch, wait_for, Invocation, Outcome};
use std::path::{Path, PathBuf};
use std::time::Duration;

/// A run with a generous kill-timeout (the ray-traced scan takes a few seconds).
fn run(dir: &Path, args: &[&str]) -> Outcome {
    let mut inv = Invocation::new(dir, args);
    inv.timeout = Duration::from_secs(300);
    inv.run()
}

fn ok(out: &Outcome, what: &str) {
    assert_eq!(out.code, Some(0), "{what}: {}", out.describe());
    let problems = out.universal_problems();
    assert!(problems.is_empty(), "{what}: {problems:?}");
}

/// 5 × 4 points of Kerr–Newman (separable).
const SEPARABLE: &[&str] = &[
    "scan",
    "--metric",
    "kerr-newman",
    "--grid",
    "a=0:0.9:5",
    "--grid",
    "q=0:0.5:4",
    "--inclination",
    "60",
];

/// 7 points of Johannsen–Psaltis across eps3 at a = 0.9: from eps3 = 2 on there is no
/// horizon (instant), the others are traced.
const RAYTRACED: &[&str] = &[
    "scan",
    "--metric",
    "johannsen-psaltis",
    "--grid",
    "eps3=-2:4:7",
    "--set",
    "a=0.9",
    "--inclination",
    "50",
    "--points",
    "64",
    "--tolerance",
    "1e-6",
];

/// `args` with more words.
fn with<'a>(args: &[&'a str], more: &[&'a str]) -> Vec<&'a str> {
    args.iter().chain(more).copied().collect()
}

/// Run `args` as one process into `single.jsonl` and as `count` shards merged into
/// `merged.jsonl` (the files given to the merge in reverse order); both files' bytes.
fn single_and_merged(dir: &Path, args: &[&str], count: usize) -> (Vec<u8>, Vec<u8>) {
    ok(
        &run(dir, &with(args, &["--out", "single.jsonl"])),
        "single run",
    );
    let mut files = Vec::new();
    for k in 0..count {
        let file = format!("part-{k}.jsonl");
        let shard = format!("{k}/{count}");
        let out = run(dir, &with(args, &["--out", &file, "--shard", &shard]));
        ok(&out, "shard");
        assert!(
            out.stdout_text().contains(&format!("shard {shard}")),
            "{}",
            out.describe()
        );
        files.push(file);
    }
    files.reverse();
    let mut merge = vec!["merge"];
    merge.extend(files.iter().map(String::as_str));
    merge.extend(["--out", "merged.jsonl"]);
    ok(&run(dir, &merge), "merge");
    (
        std::fs::read(dir.join("single.jsonl")).unwrap(),
        std::fs::read(dir.join("merged.jsonl")).unwrap(),
    )
}

#[test]
fn sharded_scans_merge_to_the_bytes_of_one_process() {
    let dir = scratch("cluster", "separable");
    let (single, merged) = single_and_merged(&dir, SEPARABLE, 3);
    assert_eq!(single.iter().filter(|&&b| b == b'\n').count(), 21);
    assert!(single == merged, "the merged separable scan differs");
    let text = String::from_utf8(single).unwrap();
    assert!(text.contains("\"solver\":\"separable\""), "{text}");

    let dir = scratch("cluster", "raytraced");
    let (single, merged) = single_and_merged(&dir, RAYTRACED, 4);
    assert!(single == merged, "the merged ray-traced scan differs");
    let text = String::from_utf8(single).unwrap();
    assert!(text.contains("\"solver\":\"raytrace\""), "{text}");
    assert!(text.contains("\"status\":\"no_horizon\""), "{text}");
}

/// The shards of the separable scan in `dir`, as `part-K.jsonl`.
fn separable_shards(dir: &Path, count: usize) -> Vec<String> {
    (0..count)
        .map(|k| {
            let file = format!("part-{k}.jsonl");
            let shard = format!("{k}/{count}");
            ok(
                &run(dir, &with(SEPARABLE, &["--out", &file, "--shard", &shard])),
                "shard",
            );
            file
        })
        .collect()
}

fn merge(dir: &Path, files: &[&str]) -> Outcome {
    let mut args = vec!["merge"];
    args.extend(files);
    args.extend(["--out", "merged.jsonl"]);
    run(dir, &args)
}

#[test]
fn missing_duplicated_incomplete_and_foreign_shards_are_named() {
    let dir = scratch("cluster", "errors");
    let files = separable_shards(&dir, 3);
    let f: Vec<&str> = files.iter().map(String::as_str).collect();
    merge(&dir, &[f[0], f[2]])
        .assert_usage_error("shard 1/3 is missing: items 1, 4, 7, 10, 13, 16, ... have no line");
    std::fs::copy(dir.join(f[1]), dir.join("again.jsonl")).unwrap();
    merge(&dir, &[f[0], f[1], f[2], "again.jsonl"])
        .assert_usage_error("shard 1/3 is given twice: 'part-1.jsonl' and 'again.jsonl'");
    // A shard file cut after its third line (the header and two points).
    let text = std::fs::read_to_string(dir.join(f[2])).unwrap();
    let cut: String = text.lines().take(3).map(|l| format!("{l}\n")).collect();
    std::fs::write(dir.join("cut.jsonl"), cut).unwrap();
    merge(&dir, &[f[0], f[1], "cut.jsonl"]).assert_usage_error(
        "shard 2/3 ('cut.jsonl') is incomplete: items 8, 11, 14, 17 have no line; rerun that \
         shard with the same arguments to finish it",
    );
    // A shard of another scan (another inclination).
    let other: Vec<&str> = SEPARABLE
        .iter()
        .map(|&w| if w == "60" { "61" } else { w })
        .collect();
    ok(
        &run(
            &dir,
            &with(&other, &["--out", "other.jsonl", "--shard", "1/3"]),
        ),
        "other shard",
    );
    merge(&dir, &[f[0], "other.jsonl", f[2]]).assert_usage_error(
        "belongs to another run than 'part-0.jsonl': they differ in argument 'inclination_deg'",
    );
    // An edited line.
    let edited =
        std::fs::read_to_string(dir.join(f[0]))
            .unwrap()
            .replacen("\"shadow\"", "\"failed\"", 1);
    std::fs::write(dir.join("edited.jsonl"), edited).unwrap();
    merge(&dir, &["edited.jsonl", f[1], f[2]]).assert_usage_error("'edited.jsonl' line 2");
    // Not a shard file; the output among the inputs; a shard that does not exist.
    ok(
        &run(&dir, &with(SEPARABLE, &["--out", "whole.jsonl"])),
        "whole",
    );
    merge(&dir, &["whole.jsonl"]).assert_usage_error("'whole.jsonl' line 1 is not a shard header");
    run(&dir, &["merge", f[0], f[1], f[2], "--out", f[1]])
        .assert_usage_error("--out 'part-1.jsonl' is one of the shard files");
    run(
        &dir,
        &with(SEPARABLE, &["--out", "x.jsonl", "--shard", "3/3"]),
    )
    .assert_usage_error("--shard: shard 3/3 does not exist: shards are numbered from 0 to 2");
    // The complete set merges, in any order.
    ok(&merge(&dir, &[f[2], f[0], f[1]]), "complete set");
}

/// 80 points (about a second): long enough to kill a shard part-way.
const LONG: &[&str] = &[
    "scan",
    "--metric",
    "kerr-newman",
    "--grid",
    "a=0:0.9:10",
    "--grid",
    "q=0:0.5:8",
    "--inclination",
    "60",
];

#[test]
fn a_killed_shard_rerun_completes_the_merge_with_nothing_lost_or_repeated() {
    let dir = scratch("cluster", "killed");
    ok(
        &run(&dir, &with(LONG, &["--out", "single.jsonl"])),
        "single run",
    );
    let single = std::fs::read(dir.join("single.jsonl")).unwrap();
    ok(
        &run(
            &dir,
            &with(LONG, &["--out", "part-1.jsonl", "--shard", "1/2"]),
        ),
        "shard 1",
    );
    // Shard 0 in a folder of its own (to count its lines), killed once 10 of its 40 points
    // are on disk.
    let own = dir.join("shard0");
    std::fs::create_dir_all(&own).unwrap();
    let args = with(LONG, &["--out", "part-0.jsonl", "--shard", "0/2"]);
    let mut inv = Invocation::new(&own, &args);
    inv.timeout = Duration::from_secs(120);
    let running = inv.spawn();
    let reached = wait_for(|| point_lines_on_disk(&own) >= 10, Duration::from_secs(60));
    running.signal(libc::SIGKILL);
    let killed = running.finish();
    assert!(
        reached,
        "shard 0 never wrote 10 points: {}",
        killed.describe()
    );
    assert_eq!(killed.signal, Some(libc::SIGKILL), "{}", killed.describe());
    let on_disk = point_lines_on_disk(&own);
    assert!(on_disk < 40, "shard 0 finished before it was killed");
    let part0 = own.join("part-0.jsonl");
    let part0 = part0.to_str().unwrap();
    // The merge refuses the killed shard, naming it.
    run(
        &dir,
        &["merge", part0, "part-1.jsonl", "--out", "merged.jsonl"],
    )
    .assert_usage_error("shard 0/2 (");
    // Rerun: the points on disk are kept, the rest computed.
    let resumed = inv.run();
    ok(&resumed, "resumed shard");
    let said = resumed.stdout_text();
    let kept: usize = said
        .split(" computed, ")
        .nth(1)
        .and_then(|t| t.split(' ').next())
        .and_then(|n| n.parse().ok())
        .unwrap_or_else(|| panic!("no kept count in {said}"));
    assert!(
        kept >= on_disk,
        "{on_disk} points were on disk, {kept} kept: {said}"
    );
    assert!(said.contains("40 points"), "{said}");
    ok(
        &run(
            &dir,
            &["merge", part0, "part-1.jsonl", "--out", "merged.jsonl"],
        ),
        "merge",
    );
    let merged = std::fs::read(dir.join("merged.jsonl")).unwrap();
    assert!(
        merged == single,
        "the merged scan differs from one process's"
    );
}

#[test]
fn image_shards_merge_to_the_image_files_of_one_process() {
    let dir = scratch("cluster", "image");
    let base = [
        "image",
        "--metric",
        "kerr",
        "--set",
        "a=0.5",
        "--inclination",
        "60",
        "--pixels",
        "20",
        "--blur-m",
        "2",
    ];
    for ext in ["npy", "fits"] {
        let single = format!("single.{ext}");
        ok(
            &run(&dir, &with(&base, &["--out", &single])),
            "single image",
        );
    }
    let parts = ["p0.jsonl", "p1.jsonl", "p2.jsonl"];
    for (k, part) in parts.iter().enumerate() {
        let shard = format!("{k}/3");
        let out = run(&dir, &with(&base, &["--out", part, "--shard", &shard]));
        ok(&out, "image shard");
        assert!(out.stdout_text().contains("rows in"), "{}", out.describe());
    }
    for ext in ["npy", "fits"] {
        let merged = format!("merged.{ext}");
        let out = run(
            &dir,
            &["merge", parts[0], parts[1], parts[2], "--out", &merged],
        );
        ok(&out, "image merge");
        assert!(out.stdout_text().contains("ring"), "{}", out.describe());
        let a = std::fs::read(dir.join(format!("single.{ext}"))).unwrap();
        let b = std::fs::read(dir.join(&merged)).unwrap();
        assert!(a == b, "the merged .{ext} image differs from one process's");
    }
    // A shard's --out must be the shard file.
    run(&dir, &with(&base, &["--out", "x.npy", "--shard", "0/3"]))
        .assert_usage_error("with --shard, --out names the shard file (.jsonl)");
}

#[test]
fn calibration_shards_merge_to_the_calibration_of_one_process() {
    let dir = scratch("cluster", "calibrate");
    let base = [
        "calibrate",
        "--metric",
        "schwarzschild",
        "--inclination",
        "30",
        "--resolution-uas",
        "10",
        "--theta-g-uas",
        "3.8",
        "--pixels",
        "16",
    ];
    let single = run(&dir, &with(&base, &["--out", "single.json"]));
    ok(&single, "single calibration");
    for k in 0..2 {
        let (part, shard) = (format!("c{k}.jsonl"), format!("{k}/2"));
        ok(
            &run(&dir, &with(&base, &["--out", &part, "--shard", &shard])),
            "calibration shard",
        );
    }
    let merged = run(
        &dir,
        &["merge", "c1.jsonl", "c0.jsonl", "--out", "merged.json"],
    );
    ok(&merged, "calibration merge");
    assert_eq!(
        merged.stdout_text().replace("merged.json", "single.json"),
        single.stdout_text()
    );
    let a = std::fs::read(dir.join("single.json")).unwrap();
    let b = std::fs::read(dir.join("merged.json")).unwrap();
    assert!(a == b, "the merged calibration differs from one process's");
}

/// Every file of `dir` whose name starts with `prefix`.
fn files_starting(dir: &Path, prefix: &str) -> Vec<PathBuf> {
    let mut found: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| {
            p.file_name()
                .and_then(|n| n.to_str())
                .is_some_and(|n| n.starts_with(prefix))
        })
        .collect();
    found.sort();
    found
}

#[test]
fn table_shards_merge_to_the_table_of_one_process() {
    let dir = scratch("cluster", "tables");
    std::fs::write(
        dir.join("r.toml"),
        "[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n",
    )
    .unwrap();
    let base = [
        "infer",
        "--metric",
        "kerr-newman",
        "--measurement",
        "r.toml",
        "--quiet",
        "--tabulate",
        "--table-nodes",
        "7",
        "--prior",
        "q=uniform:0:0.5",
        "--prior",
        "inclination=fixed:40",
        "--sampler",
        "quadrature",
        "--samples",
        "200",
        "--json",
    ];
    let single = run(&dir, &with(&base, &["--table-dir", "single"]));
    ok(&single, "single infer");
    for k in 0..2 {
        let shard = format!("{k}/2");
        let out = run(
            &dir,
            &with(&base, &["--table-dir", "parts", "--shard", &shard]),
        );
        ok(&out, "table shard");
        assert!(
            out.stdout_text().contains("table shard"),
            "{}",
            out.describe()
        );
    }
    let parts = files_starting(&dir.join("parts"), "umbral-table-");
    assert_eq!(parts.len(), 2, "{parts:?}");
    let mut args: Vec<String> = vec!["merge".into()];
    args.extend(parts.iter().map(|p| p.display().to_string()));
    args.extend(["--out".into(), "merged".into()]);
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    ok(&run(&dir, &args), "table merge");
    let single_tables = files_starting(&dir.join("single"), "umbral-table-");
    let merged_tables = files_starting(&dir.join("merged"), "umbral-table-");
    assert_eq!(single_tables.len(), 1);
    assert_eq!(
        single_tables[0].file_name(),
        merged_tables[0].file_name(),
        "the merged table has the single run's name"
    );
    assert!(
        std::fs::read(&single_tables[0]).unwrap() == std::fs::read(&merged_tables[0]).unwrap(),
        "the merged table differs"
    );
    // The posterior from the merged table equals the single run's.
    let from_merged = run(&dir, &with(&base, &["--table-dir", "merged"]));
    ok(&from_merged, "infer from the merged table");
    assert_eq!(from_merged.stdout_text(), single.stdout_text());
}
