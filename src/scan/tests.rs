//! Unit tests of the grid, axes, shards, hash and ordered evaluation.

use super::parallel::{claim, MAX_CLAIM};
use super::*;
use std::sync::atomic::AtomicUsize;

fn spec(s: &str) -> VarySpec {
    VarySpec::parse(s, true).unwrap()
}

fn axis(s: &str) -> Axis {
    let v = spec(s);
    let n = v.count.unwrap();
    Axis::new(&v, "MHz", false, n).unwrap()
}

#[test]
fn vary_accepts_units_with_and_without_space() {
    let a = spec("fields.probe.tuned.detuning=-50MHz..50MHz:101");
    let b = spec("fields.probe.tuned.detuning=-50 MHz..50 MHz:101");
    assert_eq!(a, b);
    assert_eq!(a.path, "fields.probe.tuned.detuning");
    assert_eq!((a.start, a.end, a.count), (-50.0, 50.0, Some(101)));
    assert_eq!(a.unit.as_deref(), Some("MHz"));
    // A unit on one end applies to both; none at all is allowed.
    assert_eq!(spec("x.y=1..2 ns:3").unit.as_deref(), Some("ns"));
    assert_eq!(spec("x.y=1e-3..2.5e-3:3").unit, None);
    assert_eq!(spec("x.y=1e-3..2.5e-3:3").end, 2.5e-3);
    // 'e' followed by a letter starts the unit, not an exponent.
    let d = spec("couplings.0.dipole=1ea0..2ea0:2");
    assert_eq!((d.start, d.unit.as_deref()), (1.0, Some("ea0")));
    assert_eq!(spec("a.b=1..2 cm^-1:2").unit.as_deref(), Some("cm^-1"));
    assert!(spec("a.b=1ns..1000ns:7:log").log);
    assert_eq!(VarySpec::parse("a.b=1..2", false).unwrap().count, None);
}

#[test]
fn vary_rejects_malformed_specs() {
    for bad_spec in [
        "a.b=1..2:0",
        "a.b=1..2:-3",
        "a.b=1..2:x",
        "a.b=1..2",
        "a.b=1:5",
        "=1..2:3",
        "a..b=1..2:3",
        "a.b",
        "a.b=x..2:3",
        "a.b=1MHz..2GHz:3",
        "a.b=1..2:3:lin",
        "a b=1..2:3",
    ] {
        let e = VarySpec::parse(bad_spec, true).unwrap_err();
        assert_eq!(e.exit_code(), crate::error::EXIT_BAD_INPUT, "{bad_spec}");
    }
    let msg = VarySpec::parse("a.b=1..2:0", true).unwrap_err().to_string();
    assert!(msg.contains("at least 1"), "{msg}");
}

#[test]
fn axis_unit_rules_and_log_positivity() {
    let v = spec("levels.e.tolerance=1e-4..1e-2:3");
    // Bare key: no unit allowed, none added.
    assert_eq!(Axis::new(&v, "", false, 3).unwrap().unit, "");
    let withunit = spec("levels.e.tolerance=1..2 MHz:3");
    assert!(Axis::new(&withunit, "", false, 3).is_err());
    // No unit written: the scheme's unit is used.
    assert_eq!(
        Axis::new(&spec("a.b=1..2:3"), "ns", false, 3).unwrap().unit,
        "ns"
    );
    assert!(Axis::new(&spec("a.b=-1..2:3"), "ns", true, 3).is_err());
    assert!(Axis::new(&spec("a.b=0..2:3"), "ns", true, 3).is_err());
}

#[test]
fn linear_and_log_values_hit_the_ends_exactly() {
    let a = axis("a.b=-50..50:101");
    assert_eq!(a.value(0), -50.0);
    assert_eq!(a.value(50), 0.0);
    assert_eq!(a.value(100), 50.0);
    approx::assert_relative_eq!(a.value(1), -49.0, max_relative = 1e-15);
    let v = spec("a.b=1..1000:4");
    let l = Axis::new(&v, "ns", true, 4).unwrap();
    let vals: Vec<f64> = (0..4).map(|i| l.value(i)).collect();
    assert_eq!(vals[0], 1.0);
    assert_eq!(vals[3], 1000.0);
    approx::assert_relative_eq!(vals[1], 10.0, max_relative = 1e-14);
    approx::assert_relative_eq!(vals[2], 100.0, max_relative = 1e-14);
    // A single point sits at START.
    assert_eq!(axis("a.b=3..7:1").value(0), 3.0);
}

#[test]
fn grid_is_row_major_with_the_last_axis_fastest() {
    let g = Grid::new(vec![axis("a.x=0..1:2"), axis("a.y=10..30:3")], false).unwrap();
    assert_eq!(g.len(), 6);
    let pts: Vec<Vec<f64>> = (0..6).map(|i| g.point(i)).collect();
    assert_eq!(
        pts,
        vec![
            vec![0.0, 10.0],
            vec![0.0, 20.0],
            vec![0.0, 30.0],
            vec![1.0, 10.0],
            vec![1.0, 20.0],
            vec![1.0, 30.0],
        ]
    );
    assert_eq!(
        g.overrides(&pts[4]),
        vec![
            ("a.x".to_string(), "1 MHz".to_string()),
            ("a.y".to_string(), "20 MHz".to_string())
        ]
    );
}

#[test]
fn grid_limit_needs_force() {
    let big = || vec![axis("a.x=0..1:10000"), axis("a.y=0..1:1001")];
    let e = Grid::new(big(), false).unwrap_err();
    assert!(e.to_string().contains("--force"), "{e}");
    assert_eq!(Grid::new(big(), true).unwrap().len(), 10_010_000);
    // Exactly the limit passes.
    let ok = vec![axis("a.x=0..1:10000"), axis("a.y=0..1:1000")];
    assert_eq!(Grid::new(ok, false).unwrap().len(), MAX_POINTS);
}

#[test]
fn shard_spec_parses_and_rejects() {
    assert_eq!(Shard::parse("3/16").unwrap(), Shard { k: 3, n: 16 });
    assert_eq!(Shard::parse("1/1").unwrap(), Shard { k: 1, n: 1 });
    for s in [
        "0/4", "5/4", "1/0", "1-4", "a/4", "2/x", "/4", "-1/4", "1.5/4",
    ] {
        let e = Shard::parse(s).unwrap_err();
        assert_eq!(e.exit_code(), crate::error::EXIT_BAD_INPUT, "{s}");
    }
}

#[test]
fn shards_cover_every_point_exactly_once() {
    for total in [0usize, 1, 7, 100, 101, 1000] {
        for n in 1..=13 {
            let mut next = 0;
            for k in 1..=n {
                let r = Shard { k, n }.range(total);
                assert_eq!(r.start, next, "total {total} n {n} k {k}");
                assert!(r.len() <= total / n + 1);
                next = r.end;
            }
            assert_eq!(next, total);
        }
    }
}

#[test]
fn merge_order_needs_every_shard_once() {
    let s = |k, n| Shard { k, n };
    assert_eq!(
        merge_order(&[s(3, 3), s(1, 3), s(2, 3)]).unwrap(),
        vec![1, 2, 0]
    );
    assert!(merge_order(&[s(1, 3), s(3, 3)])
        .unwrap_err()
        .to_string()
        .contains("2 of 3 missing"));
    assert!(merge_order(&[s(1, 2), s(1, 2), s(2, 2)])
        .unwrap_err()
        .to_string()
        .contains("twice"));
    assert!(merge_order(&[s(1, 2), s(2, 3)]).is_err());
    assert!(merge_order(&[]).is_err());
}

#[test]
fn scan_hash_tracks_scheme_axes_and_tolerance() {
    let axes = vec![axis("a.b=-1..1:3")];
    let h = scan_hash(b"scheme", &axes, None);
    assert_eq!(h.len(), 64);
    assert_eq!(h, scan_hash(b"scheme", &axes, None));
    assert_ne!(h, scan_hash(b"scheme ", &axes, None));
    assert_ne!(h, scan_hash(b"scheme", &[axis("a.b=-1..1:4")], None));
    assert_ne!(h, scan_hash(b"scheme", &axes, Some(1e-3)));
}

/// A fake evaluation whose cost varies from point to point, so threads
/// finish out of order.
fn slow_square(i: usize) -> Result<u64, Error> {
    let spin = (i * 7919) % 13;
    std::thread::sleep(std::time::Duration::from_micros(50 * spin as u64));
    Ok((i * i) as u64)
}

#[test]
fn rows_reach_the_sink_in_grid_order_on_any_thread_count() {
    for jobs in [1, 2, 4] {
        let pool = thread_pool(Some(jobs)).unwrap();
        let mut seen = Vec::new();
        run_ordered(&pool, 5..205, slow_square, |i, v| {
            seen.push((i, v));
            Ok(())
        })
        .unwrap();
        let want: Vec<(usize, u64)> = (5..205).map(|i| (i, (i * i) as u64)).collect();
        assert_eq!(seen, want, "jobs {jobs}");
    }
}

#[test]
fn claims_cover_the_range_once_and_shrink_to_single_points() {
    let next = AtomicUsize::new(3);
    let mut claims = Vec::new();
    while let Some(c) = claim(&next, 1004, 2) {
        claims.push(c);
    }
    let flat: Vec<usize> = claims.iter().flat_map(|c| c.clone()).collect();
    assert_eq!(flat, (3..1004).collect::<Vec<_>>());
    assert_eq!(claims[0].len(), MAX_CLAIM);
    assert!(claims.windows(2).all(|w| w[1].len() <= w[0].len()));
    // The last 16 points (remaining < 8 * workers) go one at a time.
    assert!(claims.iter().rev().take(16).all(|c| c.len() == 1));
    assert!(claims.len() < 1001 / 4, "{} claims", claims.len());
}

#[test]
fn an_error_stops_the_scan_and_nothing_after_it_is_written() {
    let pool = thread_pool(Some(3)).unwrap();
    let mut seen = Vec::new();
    let r = run_ordered(
        &pool,
        0..500,
        |i| {
            if i == 40 {
                Err(bad("point", "fails"))
            } else {
                slow_square(i)
            }
        },
        |i, _| {
            seen.push(i);
            Ok(())
        },
    );
    assert!(r.is_err());
    assert!(seen.iter().all(|&i| i < 40));
    assert_eq!(seen, (0..seen.len()).collect::<Vec<_>>());
    // A failing sink stops it too.
    let r = run_ordered(&pool, 0..500, slow_square, |i, _| {
        if i == 10 {
            Err(bad("sink", "full"))
        } else {
            Ok(())
        }
    });
    assert!(r.unwrap_err().to_string().contains("full"));
    assert!(thread_pool(Some(0)).is_err());
}

#[test]
fn linked_paths_step_with_their_axis_and_enter_the_hash() {
    let mut a = axis("a.x=0..10:5");
    a.link(&VarySpec::parse_link("a.y=20..0").unwrap(), "GHz")
        .unwrap();
    let g = Grid::new(vec![a.clone(), axis("a.z=1..2:2")], false).unwrap();
    assert_eq!(g.len(), 10);
    // Point 3 (row-major): x index 1, z index 1; y steps with x.
    assert_eq!(g.point(3), vec![2.5, 15.0, 2.0]);
    assert_eq!(g.point(9), vec![10.0, 0.0, 2.0]);
    assert_eq!(
        g.overrides(&g.point(3))[1],
        ("a.y".to_string(), "15 GHz".to_string())
    );
    let plain = scan_hash(b"s", &[axis("a.x=0..10:5")], None);
    assert_ne!(plain, scan_hash(b"s", std::slice::from_ref(&a), None));
    // Refused: another count, ':log' of its own, a unit on a bare number,
    // a non-positive end on a log axis.
    let mut b = axis("a.x=0..10:5");
    for (s, unit) in [
        ("a.y=1..2:4", "MHz"),
        ("a.y=1..2:log", "MHz"),
        ("a.y=1..2 MHz", ""),
    ] {
        let e = b.link(&VarySpec::parse_link(s).unwrap(), unit).unwrap_err();
        assert_eq!(e.exit_code(), crate::error::EXIT_BAD_INPUT, "{s}");
    }
    let mut l = Axis::new(&spec("a.b=1..100:3"), "ns", true, 3).unwrap();
    assert!(l
        .link(&VarySpec::parse_link("a.c=-1..1").unwrap(), "ns")
        .is_err());
    l.link(&VarySpec::parse_link("a.c=10..1000").unwrap(), "ns")
        .unwrap();
    let mid: Vec<f64> = l.values(1).collect();
    approx::assert_relative_eq!(mid[1], 100.0, max_relative = 1e-14);
    assert!(b.links.is_empty());
}
