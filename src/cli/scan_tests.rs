//! The scan's file logic without physics: byte identity on any thread
//! count, shards merged, resume after a cut, refusals.

use super::*;
use levelplan::render::scan_plot::plot_scan_text;
use levelplan::report::Provenance;
use levelplan::scan::merge::merge_texts;
use levelplan::scan::{Axis, Spacing};

/// A fake evaluation with two levels and an analytic row, so the file
/// logic is tested without the physics: P(e) = x^2 / (1 + x^2).
fn fake(coords: &[f64]) -> Result<ScanRow, Error> {
    let x: f64 = coords.iter().sum();
    let pe = x * x / (1.0 + x * x);
    Ok(ScanRow {
        coords: coords.to_vec(),
        populations: vec![1.0 - pe, pe],
        max_spectator: pe / 3.0,
        flagged: usize::from(pe > 0.5),
        estimates: vec![None, Some(x * x)],
        lost: Some(pe / 10.0),
        scattered_photons: Some(x.abs() / 7.0),
    })
}

fn axis(path: &str, start: f64, end: f64, count: usize) -> Axis {
    Axis {
        path: path.into(),
        unit: "MHz".into(),
        start,
        end,
        count,
        spacing: Spacing::Linear,
        links: Vec::new(),
    }
}

fn plan(shard: Option<Shard>) -> Plan {
    plan_of(shard, false)
}

/// The plan of the 7 x 5 fake scan; `open`: with the open-system columns.
fn plan_of(shard: Option<Shard>, open: bool) -> Plan {
    let grid = Grid::new(
        vec![axis("a.x", -2.0, 2.0, 7), axis("a.y", 0.0, 1.0, 5)],
        false,
    )
    .unwrap();
    let prov = Provenance::new("fake.yaml", "00");
    let ids = vec!["g".to_string(), "e".to_string()];
    let hash = grid::scan_hash(b"fake", &grid.axes, None);
    let head = fmt::head(&fmt::ScanHead {
        provenance: &prov,
        axes: &grid.axes,
        tolerance: None,
        default_tolerance: 1e-3,
        points: grid.len(),
        hash: &hash,
        shard,
        level_ids: &ids,
        open,
    });
    let range = shard.map_or(0..grid.len(), |s| s.range(grid.len()));
    Plan {
        grid,
        range,
        head,
        n_levels: 2,
        open,
    }
}

struct TempDir(PathBuf);
impl TempDir {
    fn new(tag: &str) -> TempDir {
        let d = std::env::temp_dir().join(format!("levelplan-scan-{tag}-{}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        fs::create_dir_all(&d).unwrap();
        TempDir(d)
    }
}
impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = fs::remove_dir_all(&self.0);
    }
}

fn run(p: &Plan, jobs: usize, out: &Path, resume: bool) -> Result<Vec<ScanRow>, Error> {
    let pool = grid::thread_pool(Some(jobs)).unwrap();
    let opts = RunOptions {
        resume,
        keep: true,
        ..RunOptions::default()
    };
    match run_plan(p, &pool, &fake, Dest::File(out), opts)? {
        Outcome::Done(rows) => Ok(rows),
        o => panic!("no time limit, yet {o:?}"),
    }
}

#[test]
fn output_is_byte_identical_on_one_thread_or_many() {
    let d = TempDir::new("threads");
    let p = plan(None);
    let rows = run(&p, 1, &d.0.join("one.csv"), false).unwrap();
    run(&p, 3, &d.0.join("three.csv"), false).unwrap();
    let one = fs::read(d.0.join("one.csv")).unwrap();
    assert_eq!(one, fs::read(d.0.join("three.csv")).unwrap());
    assert_eq!(rows.len(), 35);
    // Grid order: the last --vary fastest.
    assert_eq!(rows[1].coords, vec![-2.0, 0.25]);
    assert_eq!(rows[5].coords, vec![-2.0 + 4.0 / 6.0, 0.0]);
    let text = String::from_utf8(one).unwrap();
    assert_eq!(text.lines().filter(|l| !l.starts_with('#')).count(), 36);
    assert!(!partial_path(&d.0.join("one.csv")).unwrap().exists());
}

#[test]
fn merged_shards_equal_the_unsharded_scan() {
    let d = TempDir::new("shards");
    let whole = d.0.join("whole.csv");
    run(&plan(None), 2, &whole, false).unwrap();
    for n in [1usize, 3, 4, 35, 40] {
        let mut names = Vec::new();
        let mut texts = Vec::new();
        // Given in reverse order: merge sorts by K.
        for k in (1..=n).rev() {
            let part = d.0.join(format!("part_{k}_of_{n}.csv"));
            run(&plan(Some(Shard { k, n })), 2, &part, false).unwrap();
            texts.push(fs::read_to_string(&part).unwrap());
            names.push(part);
        }
        let merged = merge_texts(&names, &texts).unwrap();
        assert_eq!(merged, fs::read(&whole).unwrap(), "n = {n}");
        // The merged file plots (a 2-D heat map of 7 x 5 cells).
        let svg = plot_scan_text(&String::from_utf8(merged).unwrap(), false)
            .unwrap()
            .unwrap();
        assert!(svg.matches("<rect").count() >= 35 + 100);
        // A missing shard is refused.
        if n > 1 {
            let e = merge_texts(&names[1..], &texts[1..]).unwrap_err();
            assert!(e.to_string().contains("missing"), "{e}");
        }
    }
}

#[test]
fn merge_refuses_parts_of_different_scans_and_cut_parts() {
    let d = TempDir::new("mismatch");
    let a = d.0.join("a.csv");
    let b = d.0.join("b.csv");
    run(&plan(Some(Shard { k: 1, n: 2 })), 1, &a, false).unwrap();
    run(&plan(Some(Shard { k: 2, n: 2 })), 1, &b, false).unwrap();
    let ta = fs::read_to_string(&a).unwrap();
    let tb = fs::read_to_string(&b).unwrap();
    let names = vec![a.clone(), b.clone()];
    assert!(merge_texts(&names, &[ta.clone(), tb.clone()]).is_ok());
    let other = tb.replace(fmt::split(&tb).unwrap().hash().unwrap(), &"1".repeat(64));
    let e = merge_texts(&names, &[ta.clone(), other]).unwrap_err();
    assert!(e.to_string().contains("different scans"), "{e}");
    assert_eq!(e.exit_code(), levelplan::error::EXIT_BAD_INPUT);
    let cut = tb[..tb.len() - 3].to_string();
    assert!(merge_texts(&names, &[ta.clone(), cut])
        .unwrap_err()
        .to_string()
        .contains("cut row"));
    let short = {
        let mut lines: Vec<&str> = tb.lines().collect();
        lines.pop();
        lines.join("\n") + "\n"
    };
    assert!(merge_texts(&names, &[ta.clone(), short])
        .unwrap_err()
        .to_string()
        .contains("rows where"));
    let whole = d.0.join("whole.csv");
    run(&plan(None), 1, &whole, false).unwrap();
    let tw = fs::read_to_string(&whole).unwrap();
    assert!(merge_texts(&[whole], &[tw])
        .unwrap_err()
        .to_string()
        .contains("not a shard part"));
}

#[test]
fn resume_after_a_cut_equals_an_uninterrupted_run() {
    resume_after_a_cut(false);
}

#[test]
fn resume_and_merge_read_the_open_columns_back() {
    resume_after_a_cut(true);
    let d = TempDir::new("open-merge");
    let whole = d.0.join("whole.csv");
    run(&plan_of(None, true), 2, &whole, false).unwrap();
    let full = fs::read_to_string(&whole).unwrap();
    assert!(full.contains(",est(g),est(e),lost,scattered_photons\n"));
    let mut names = Vec::new();
    let mut texts = Vec::new();
    for k in 1..=3 {
        let part = d.0.join(format!("part_{k}.csv"));
        run(&plan_of(Some(Shard { k, n: 3 }), true), 1, &part, false).unwrap();
        texts.push(fs::read_to_string(&part).unwrap());
        names.push(part);
    }
    assert_eq!(merge_texts(&names, &texts).unwrap(), full.as_bytes());
    // The merged file plots (its head says the rows end in the two columns).
    let svg = plot_scan_text(&full, false).unwrap().unwrap();
    assert!(svg.matches("<rect").count() >= 35 + 100);
    // A closed part does not join open ones.
    let closed = d.0.join("closed.csv");
    run(
        &plan_of(Some(Shard { k: 3, n: 3 }), false),
        1,
        &closed,
        false,
    )
    .unwrap();
    texts[2] = fs::read_to_string(&closed).unwrap();
    let e = merge_texts(&names, &texts).unwrap_err();
    assert!(e.to_string().contains("differ in their head"), "{e}");
}

/// Cut a finished scan after 11 and a half rows, resume it, and compare.
fn resume_after_a_cut(open: bool) {
    let d = TempDir::new(if open { "resume-open" } else { "resume" });
    let whole = d.0.join("whole.csv");
    let p = plan_of(None, open);
    let all_rows = run(&p, 2, &whole, false).unwrap();
    let full = fs::read_to_string(&whole).unwrap();
    // Simulate a kill: the partial file holds the head, 11 rows and half
    // of the 12th.
    let out = d.0.join("cut.csv");
    let partial = partial_path(&out).unwrap();
    let body_start = fmt::split(&full).unwrap().body_start;
    let eleven: usize = full[body_start..]
        .lines()
        .take(11)
        .map(|l| l.len() + 1)
        .sum();
    let cut_at = body_start + eleven + 9;
    fs::write(&partial, &full[..cut_at]).unwrap();
    // Without --resume the partial file is not overwritten.
    let e = run(&p, 2, &out, false).unwrap_err();
    assert!(e.to_string().contains("--resume"), "{e}");
    assert_eq!(fs::read_to_string(&partial).unwrap(), &full[..cut_at]);
    assert!(!out.exists());
    // With it, the scan continues and the result is byte-identical;
    // the rows returned (for a plot) include those read back.
    let rows = run(&p, 3, &out, true).unwrap();
    assert_eq!(fs::read_to_string(&out).unwrap(), full);
    let written =
        |r: Vec<ScanRow>| -> Vec<ScanRow> { r.into_iter().map(|x| x.as_written(open)).collect() };
    assert_eq!(written(rows), written(all_rows));
    assert!(!partial.exists());
}

#[test]
fn resume_refuses_a_partial_file_of_another_scan() {
    let d = TempDir::new("resume-other");
    let out = d.0.join("x.csv");
    let partial = partial_path(&out).unwrap();
    let other = plan(Some(Shard { k: 1, n: 2 }));
    fs::write(&partial, &other.head).unwrap();
    let e = run(&plan(None), 1, &out, true).unwrap_err();
    assert!(e.to_string().contains("different scan"), "{e}");
    assert_eq!(e.exit_code(), levelplan::error::EXIT_BAD_INPUT);
    // A damaged row is refused too.
    let p = plan(None);
    fs::write(&partial, format!("{}9e9,1,2\n", p.head)).unwrap();
    let e = run(&p, 1, &out, true).unwrap_err();
    assert!(e.to_string().contains("damaged"), "{e}");
    assert!(!out.exists());
}

#[test]
fn a_failing_point_leaves_no_output_file() {
    let d = TempDir::new("fail");
    let out = d.0.join("f.csv");
    let p = plan(None);
    let pool = grid::thread_pool(Some(2)).unwrap();
    let failing = |c: &[f64]| {
        if c[0] > 0.0 {
            Err(bad("point", "fails"))
        } else {
            fake(c)
        }
    };
    let opts = RunOptions::default();
    assert!(run_plan(&p, &pool, &failing, Dest::File(&out), opts).is_err());
    assert!(!out.exists());
    // The rows before the failure are kept for inspection.
    assert!(partial_path(&out).unwrap().exists());
}

#[test]
fn partial_path_sits_beside_the_output() {
    assert_eq!(
        partial_path(Path::new("a/b.csv")).unwrap(),
        PathBuf::from("a/.b.csv.partial")
    );
    assert_eq!(
        partial_path(Path::new("b.csv")).unwrap(),
        PathBuf::from(".b.csv.partial")
    );
    assert!(partial_path(Path::new("/")).is_err());
}

/// Regression (`--time-limit`): a scan stopped at its deadline keeps the
/// rows written in the partial file, releases its lock, and `--resume`
/// completes the same bytes.
#[test]
fn a_scan_stopped_by_its_time_limit_resumes_to_the_same_file() {
    let d = TempDir::new("deadline");
    let p = plan(None);
    let whole = d.0.join("whole.csv");
    run(&p, 2, &whole, false).unwrap();
    let out = d.0.join("stopped.csv");
    let pool = grid::thread_pool(Some(2)).unwrap();
    let slow = |c: &[f64]| {
        std::thread::sleep(std::time::Duration::from_millis(20));
        fake(c)
    };
    let opts = RunOptions {
        deadline: Some(Instant::now() + std::time::Duration::from_millis(150)),
        ..RunOptions::default()
    };
    let Outcome::Stopped { written, partial } =
        run_plan(&p, &pool, &slow, Dest::File(&out), opts).unwrap()
    else {
        panic!("35 points of 20 ms on 2 threads outlast 150 ms");
    };
    assert!(written > 0 && written < 35, "{written}");
    assert_eq!(partial, Some(partial_path(&out).unwrap()));
    assert!(!out.exists());
    assert!(!lock::lock_path(&out).unwrap().exists());
    run(&p, 2, &out, true).unwrap();
    assert_eq!(fs::read(&out).unwrap(), fs::read(&whole).unwrap());
}
