//! Sharded sweeps: the slices of a sweep are disjoint and cover it, and
//! their results merged give the same runs, summary, pass rate and report
//! as the sweep run in one piece.

use std::process::Command;

use kappaline_hil::shards::{merge, write_shard, Stored};
use kappaline_hil::sweep::{self, Plan, Shard};

fn tempdir(tag: &str) -> std::path::PathBuf {
    let d = std::env::temp_dir().join(format!("kappaline-hil-{tag}-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// 1000 seeds of 2 s of the warehouse loop: short runs, so the test is fast.
fn plan() -> Plan {
    Plan {
        source: "warehouse".into(),
        base: vec![("thresholds.min_completion".into(), toml::Value::Float(0.0))],
        params: Vec::new(),
        seeds: 0..1000,
        duration_s: Some(2.0),
    }
}

#[test]
fn shard_ranges_are_disjoint_and_cover_the_sweep() {
    for (total, n) in [(1000u64, 3u64), (7, 7), (5, 8), (1, 1), (1_000_000_007, 13)] {
        let mut next = 0;
        for k in 1..=n {
            let r = Shard { index: k, count: n }.range(total);
            assert_eq!(r.start, next, "{total} in {n}: shard {k}");
            next = r.end;
        }
        assert_eq!(next, total);
    }
    assert!(Shard::parse("0/3").is_err());
    assert!(Shard::parse("4/3").is_err());
    assert!(Shard::parse("3").is_err());
    assert_eq!(Shard::parse("2/3"), Ok(Shard { index: 2, count: 3 }));
}

#[test]
fn three_shards_of_a_thousand_seeds_merged_equal_one_run() {
    let plan = plan();
    let whole_jobs = plan.jobs().unwrap();
    let whole = sweep::run(&plan, &whole_jobs, &|| ()).unwrap();
    assert_eq!(whole.len(), 1000);
    let dir = tempdir("shards");
    let mut files = Vec::new();
    // Written out of order on purpose: merge sorts them.
    for k in [3, 1, 2] {
        let shard = Shard { index: k, count: 3 };
        let jobs = plan.shard_jobs(shard).unwrap();
        let results = sweep::run(&plan, &jobs, &|| ()).unwrap();
        files.push(write_shard(&dir, &plan, shard, &results).unwrap());
    }
    let merged = merge(&files).unwrap();
    let one = Stored::of(&plan, Shard::WHOLE, whole).unwrap();
    assert_eq!(merged.results, one.results, "the same runs, bit for bit");
    assert_eq!(merged.summary(), one.summary());
    assert!(one.summary().contains("pass rate: "));
    // The same report files, byte for byte.
    let (a, b) = (dir.join("merged"), dir.join("one"));
    sweep::write_report(&a, &merged).unwrap();
    sweep::write_report(&b, &one).unwrap();
    for entry in std::fs::read_dir(&b).unwrap() {
        let name = entry.unwrap().file_name();
        let x = std::fs::read(a.join(&name)).unwrap();
        let y = std::fs::read(b.join(&name)).unwrap();
        assert!(!y.is_empty());
        assert_eq!(x, y, "{name:?} differs");
    }
    // A shard missing, or one given twice, is refused by name.
    // files[..2] are shards 3 and 1.
    let e = merge(&files[..2]).unwrap_err().to_string();
    assert!(e.contains("shard 2/3 is missing"), "{e}");
    let mut twice = files.clone();
    twice.push(files[0].clone());
    let e = merge(&twice).unwrap_err().to_string();
    assert!(e.contains("given 2 times"), "{e}");
}

#[test]
fn shards_of_another_sweep_are_refused() {
    let dir = tempdir("shards-mixed");
    let a = plan();
    let mut b = plan();
    b.duration_s = Some(1.0);
    let mut files = Vec::new();
    for (p, k) in [(&a, 1), (&b, 2)] {
        let shard = Shard { index: k, count: 2 };
        let mut small = p.clone();
        small.seeds = 0..4;
        let jobs = small.shard_jobs(shard).unwrap();
        let r = sweep::run(&small, &jobs, &|| ()).unwrap();
        let f = write_shard(&dir, &small, shard, &r).unwrap();
        let named = dir.join(format!("{k}.json"));
        std::fs::rename(f, &named).unwrap();
        files.push(named);
    }
    let e = merge(&files).unwrap_err().to_string();
    assert!(e.contains("another sweep"), "{e}");
}

#[test]
fn the_command_line_shards_and_merges() {
    let dir = tempdir("shards-cli");
    let hil = env!("CARGO_BIN_EXE_kappaline-hil");
    let common = [
        "sweep",
        "warehouse",
        "-q",
        "--seeds",
        "12",
        "--duration",
        "2",
        "--param",
        "gnss.noise_m=0.005,0.01",
    ];
    for k in 1..=3 {
        let o = Command::new(hil)
            .args(common)
            .args(["--shard", &format!("{k}/3"), "--out"])
            .arg(&dir)
            .output()
            .unwrap();
        assert!(o.status.code().is_some_and(|c| c < 2), "{o:?}");
    }
    let mut merge = Command::new(hil);
    merge.arg("merge");
    for k in 1..=3 {
        merge.arg(dir.join(format!("shard-{k}-of-3.json")));
    }
    let o = merge.arg("--out").arg(dir.join("merged")).output().unwrap();
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(o.status.code().is_some_and(|c| c < 2), "{o:?}");
    assert!(text.contains("12 seeds with gnss.noise_m=0.005"), "{text}");
    assert!(text.contains("pass rate: "), "{text}");
    let one = Command::new(hil)
        .args(common)
        .arg("--out")
        .arg(dir.join("one"))
        .output()
        .unwrap();
    let whole = String::from_utf8_lossy(&one.stdout);
    let summary = |t: &str| t.split("sweep report").next().unwrap_or("").to_string();
    assert_eq!(summary(&text), summary(&whole));
    for f in ["summary.txt", "sweep_straight_RMS.svg", "result.json"] {
        let len = std::fs::metadata(dir.join("merged").join(f)).map_or(0, |m| m.len());
        assert!(len > 0, "{f}");
    }
    let svg = std::fs::read_to_string(dir.join("merged").join("sweep_straight_RMS.svg")).unwrap();
    assert!(
        svg.contains("gnss.noise_m") && svg.contains("pass limit"),
        "{svg}"
    );
}
