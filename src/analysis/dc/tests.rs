//! Unit checks of the engine's internals: every model's analytic derivatives against central
//! finite differences (the definition of the derivative), continuity across region
//! boundaries, the step limiters, the structural checks and the equilibrated solve.

use super::linear::Matrix;
use nalgebra::{DMatrix, DVector};

use super::linear::{solve_linear, LinearFailure};
use super::models::{self, MosRegion};
use super::network::{BjtParams, BjtPolarity, DiodeParams, MosParams, MosPolarity, Network};
use super::options::{DcError, SolveOptions};
use super::topology;

const VT: f64 = 0.025_865;
const GMIN: f64 = 1e-12;

/// Central difference of `f` at `x`.
fn slope(f: impl Fn(f64) -> f64, x: f64) -> f64 {
    let h = 1e-6 * x.abs().max(1e-3);
    (f(x + h) - f(x - h)) / (2.0 * h)
}

fn assert_slope(analytic: f64, numeric: f64, what: &str) {
    let scale = analytic.abs().max(numeric.abs()).max(1e-9);
    assert!(
        (analytic - numeric).abs() <= 1e-4 * scale,
        "{what}: analytic {analytic}, numeric {numeric}"
    );
}

#[test]
fn thermal_voltage_at_room_temperature() {
    // kT/q with the exact SI constants (k = 1.380649e-23 J/K, q = 1.602176634e-19 C).
    let vt = SolveOptions::default().thermal_voltage();
    assert!((vt - 0.025_865).abs() < 1e-6, "{vt}");
}

#[test]
fn diode_conductance_is_the_derivative_of_its_current() {
    let zener = DiodeParams {
        bv: Some(5.1),
        ..DiodeParams::default()
    };
    let rectifier = DiodeParams {
        is: 2.5e-9,
        n: 1.75,
        ..DiodeParams::default()
    };
    for p in [DiodeParams::default(), zener, rectifier] {
        for v in [-6.0, -5.2, -5.0, -1.0, 0.0, 0.3, 0.65, 0.8, 1.2, 3.0] {
            let b = models::diode_junction(v, &p, VT, GMIN);
            let numeric = slope(|v| models::diode_junction(v, &p, VT, GMIN).current, v);
            assert_slope(b.conductance, numeric, &format!("diode at {v} V"));
        }
        assert!(models::diode_junction(0.0, &p, VT, GMIN).current.abs() < 1e-20);
    }
}

#[test]
fn bjt_partials_match_finite_differences() {
    for polarity in [BjtPolarity::Npn, BjtPolarity::Pnp] {
        let p = BjtParams {
            polarity,
            is: 1e-14,
            beta_f: 120.0,
            beta_r: 2.0,
            n: 1.1,
        };
        let s = models::bjt_sign(&p);
        for (vbe, vbc) in [
            (0.65, -5.0),
            (0.7, 0.55),
            (-2.0, -3.0),
            (0.2, 0.6),
            (1.5, 1.4),
        ] {
            let (vbe, vbc) = (s * vbe, s * vbc);
            let m = models::bjt(vbe, vbc, &p, VT, GMIN);
            let ic_be = slope(|x| models::bjt(x, vbc, &p, VT, GMIN).ic, vbe);
            let ic_bc = slope(|x| models::bjt(vbe, x, &p, VT, GMIN).ic, vbc);
            let ib_be = slope(|x| models::bjt(x, vbc, &p, VT, GMIN).ib, vbe);
            let ib_bc = slope(|x| models::bjt(vbe, x, &p, VT, GMIN).ib, vbc);
            let at = format!("{polarity:?} at ({vbe}, {vbc})");
            assert_slope(m.dic_dvbe, ic_be, &format!("dIc/dVbe {at}"));
            assert_slope(m.dic_dvbc, ic_bc, &format!("dIc/dVbc {at}"));
            assert_slope(m.dib_dvbe, ib_be, &format!("dIb/dVbe {at}"));
            assert_slope(m.dib_dvbc, ib_bc, &format!("dIb/dVbc {at}"));
        }
    }
}

#[test]
fn mosfet_partials_match_finite_differences_in_every_region() {
    for polarity in [MosPolarity::N, MosPolarity::P] {
        let p = MosParams {
            polarity,
            vto: 2.0,
            k: 0.5,
            lambda: 0.03,
        };
        let s = models::mos_sign(&p);
        let points = [
            (1.0, 5.0, MosRegion::Cutoff),
            (4.0, 5.0, MosRegion::Saturation),
            (6.0, 1.0, MosRegion::Triode),
            (6.0, -1.0, MosRegion::Triode),
            (-1.0, -4.0, MosRegion::Saturation),
        ];
        for (vgs, vds, region) in points {
            let (vgs, vds) = (s * vgs, s * vds);
            let m = models::mosfet(vgs, vds, &p, GMIN);
            assert_eq!(m.region, region, "{polarity:?} at ({vgs}, {vds})");
            let gm = slope(|x| models::mosfet(x, vds, &p, GMIN).id, vgs);
            let gds = slope(|x| models::mosfet(vgs, x, &p, GMIN).id, vds);
            assert_slope(
                m.did_dvgs,
                gm,
                &format!("gm {polarity:?} at ({vgs}, {vds})"),
            );
            assert_slope(
                m.did_dvds,
                gds,
                &format!("gds {polarity:?} at ({vgs}, {vds})"),
            );
        }
    }
}

#[test]
fn mosfet_current_is_continuous_at_region_boundaries() {
    let p = MosParams {
        polarity: MosPolarity::N,
        vto: 2.0,
        k: 0.5,
        lambda: 0.05,
    };
    let id = |vgs: f64, vds: f64| models::mosfet(vgs, vds, &p, 0.0).id;
    // Saturation edge Vds = Vgs − Vt, threshold, and channel reversal at Vds = 0.
    let e = 1e-9;
    assert!((id(5.0, 3.0 - e) - id(5.0, 3.0 + e)).abs() < 1e-8);
    assert!((id(2.0 + e, 3.0) - id(2.0 - e, 3.0)).abs() < 1e-8);
    assert!((id(5.0, e) - id(5.0, -e)).abs() < 1e-8);
}

#[test]
fn current_limited_resistor_is_smooth_and_bounded() {
    let (r, limit) = (10.0, 0.1);
    for v in [-100.0, -1.0, -0.5, 0.0, 0.3, 0.999, 1.0, 1.001, 2.0, 1e6] {
        let b = models::current_limited(v, r, limit, 0.0);
        let numeric = slope(|v| models::current_limited(v, r, limit, 0.0).current, v);
        assert_slope(b.conductance, numeric, &format!("limiter at {v} V"));
        assert!(b.current.abs() <= limit * (1.0 + 1e-12));
    }
    let e = 1e-9;
    let below = models::current_limited(1.0 - e, r, limit, 0.0).current;
    let above = models::current_limited(1.0 + e, r, limit, 0.0).current;
    assert!((below - above).abs() < 1e-9);
    assert!(models::current_limited(f64::MAX, r, limit, 0.0)
        .current
        .is_finite());
}

#[test]
fn junction_limit_shortens_large_forward_steps_only() {
    let nvt = VT;
    let (v, hit) = models::limit_junction(5.0, 0.6, nvt, 1e-14);
    assert!(hit && v > 0.6 && v < 0.9, "{v}");
    let (v, hit) = models::limit_junction(0.61, 0.6, nvt, 1e-14);
    assert!(!hit && v == 0.61);
    let (v, hit) = models::limit_junction(-20.0, 0.6, nvt, 1e-14);
    assert!(!hit && v == -20.0);
    // Past the current ceiling the model is linear and steps go through.
    let (v, hit) = models::limit_junction(30.0, 20.0, nvt, 1e-14);
    assert!(!hit && v == 30.0);
}

#[test]
fn mosfet_limit_stops_a_turn_on_near_threshold() {
    let p = MosParams {
        polarity: MosPolarity::N,
        vto: 2.0,
        k: 1.0,
        lambda: 0.0,
    };
    let ((vgs, vds), hit) = models::limit_mosfet((12.0, 12.0), (0.0, 0.0), &p);
    assert!(hit && vgs == 2.5 && vds == 4.0, "({vgs}, {vds})");
    let ((vgs, vds), hit) = models::limit_mosfet((5.1, 3.9), (5.0, 4.0), &p);
    assert!(!hit && vgs == 5.1 && vds == 3.9);
    let pmos = MosParams {
        polarity: MosPolarity::P,
        ..p
    };
    let ((vgs, _), hit) = models::limit_mosfet((-12.0, -12.0), (0.0, 0.0), &pmos);
    assert!(hit && vgs == -2.5);
}

#[test]
fn voltage_source_loop_names_only_the_loop() {
    // The supply's own node is not part of a loop formed elsewhere.
    let mut net = Network::new();
    let gnd = net.ground();
    let (vcc, a, b) = (net.add_node("vcc"), net.add_node("a"), net.add_node("b"));
    net.add_voltage_source(vcc, gnd, 12.0);
    net.add_voltage_source(a, gnd, 1.0);
    net.add_voltage_source(b, a, 1.0);
    net.add_voltage_source(b, gnd, 2.0);
    net.add_resistor(vcc, a, 1.0);
    match topology::check_structure(&net) {
        Err(DcError::Singular { nodes }) => assert_eq!(nodes, vec!["a", "b"]),
        other => panic!("{other:?}"),
    }
}

#[test]
fn equilibrated_solve_handles_a_saddle_with_huge_conductance() {
    // [[g, 1], [1, 0]]·[v, i] = [0, V]: v = V, i = −g·V, for any g.
    let g = 1e30;
    let a = Matrix::from_rows(2, &[g, 1.0, 1.0, 0.0]);
    let b = [0.0, 2.0];
    let x = solve_linear(&a, &b).expect("regular");
    assert!((x[0] - 2.0).abs() < 1e-12);
    assert!((x[1] + 2.0 * g).abs() < 1e-12 * g);
}

#[test]
fn singular_and_non_finite_systems_are_reported() {
    let a = Matrix::from_rows(2, &[1.0, 1.0, 1.0, 1.0]);
    let b = [1.0, 1.0];
    assert!(matches!(solve_linear(&a, &b), Err(LinearFailure::Degenerate(ref k)) if k == &[1]));
    let zero_row = Matrix::from_rows(2, &[1.0, 0.0, 0.0, 0.0]);
    assert!(matches!(
        solve_linear(&zero_row, &b),
        Err(LinearFailure::Degenerate(_))
    ));
    let nan = Matrix::from_rows(2, &[f64::NAN, 0.0, 0.0, 1.0]);
    assert!(matches!(
        solve_linear(&nan, &b),
        Err(LinearFailure::NotFinite)
    ));
}

/// The nalgebra path the hand-written elimination replaced: equilibrate, `lu()`, solve.
fn nalgebra_reference(n: usize, rows: &[f64], b: &[f64]) -> Option<Vec<f64>> {
    let a = DMatrix::from_row_slice(n, n, rows);
    let row_scale: Vec<f64> = a
        .row_iter()
        .map(|r| if r.amax() > 0.0 { 1.0 / r.amax() } else { 0.0 })
        .collect();
    let mut scaled = a.clone();
    for (mut row, &r) in scaled.row_iter_mut().zip(&row_scale) {
        row *= r;
    }
    let col_scale: Vec<f64> = scaled
        .column_iter()
        .map(|c| if c.amax() > 0.0 { 1.0 / c.amax() } else { 0.0 })
        .collect();
    for (mut col, &c) in scaled.column_iter_mut().zip(&col_scale) {
        col *= c;
    }
    let lu = scaled.lu();
    let rhs = DVector::from_iterator(n, b.iter().zip(&row_scale).map(|(v, r)| v * r));
    let y = lu.solve(&rhs)?;
    Some(y.iter().zip(&col_scale).map(|(v, c)| v * c).collect())
}

#[test]
fn elimination_matches_the_library_lu_to_the_last_bit() {
    // A deterministic spread of MNA-like matrices: conductances over many decades, unit
    // source stamps, zeros, and rows that need pivoting.
    let mut seed: u64 = 0x9e37_79b9_7f4a_7c15;
    let mut next = move || {
        seed ^= seed << 13;
        seed ^= seed >> 7;
        seed ^= seed << 17;
        seed
    };
    for trial in 0..400 {
        let n = 1 + trial % 12;
        let rows: Vec<f64> = (0..n * n)
            .map(|_| match next() % 5 {
                0 => 0.0,
                1 => 1.0,
                2 => -1.0,
                _ => {
                    let exponent = (next() % 24) as i32 - 12;
                    let mantissa = (next() % 1_000_000) as f64 / 1e6 - 0.5;
                    mantissa * 10f64.powi(exponent)
                }
            })
            .collect();
        let b: Vec<f64> = (0..n)
            .map(|_| (next() % 1000) as f64 / 100.0 - 5.0)
            .collect();
        let Ok(ours) = solve_linear(&Matrix::from_rows(n, &rows), &b) else {
            continue;
        };
        let theirs = nalgebra_reference(n, &rows, &b).expect("regular for both");
        let same = ours
            .iter()
            .zip(&theirs)
            .all(|(a, b)| a.to_bits() == b.to_bits());
        assert!(same, "trial {trial}: {ours:?} vs {theirs:?}");
    }
}

#[test]
fn source_hull_spans_the_sources_and_ignores_leaks() {
    let mut net = Network::new();
    let (a, b, c) = (net.add_node("a"), net.add_node("b"), net.add_node("c"));
    let gnd = net.ground();
    net.add_voltage_source(a, gnd, 12.0);
    net.add_voltage_source(b, gnd, -5.0);
    net.add_resistor(a, c, 4.7e3);
    net.add_resistor(c, gnd, 1e12);
    net.add_current_source(c, gnd, 2e-6);
    let hull = net.source_hull();
    assert_eq!((hull.lo, hull.hi), (-5.0, 12.0));
    assert_eq!(hull.largest_ohms, 4.7e3);
    assert_eq!(hull.current, 2e-6);
    assert!(!hull.controlled);
    assert_eq!(hull.gain, 1.0);
    // A floating 24 V pack can sit anywhere: it widens both ends.
    let (d, e) = (net.add_node("d"), net.add_node("e"));
    net.add_voltage_source(d, e, 24.0);
    let hull = net.source_hull();
    assert_eq!((hull.lo, hull.hi), (-29.0, 36.0));
    net.add_vcvs(c, gnd, a, b, 1e5);
    let hull = net.source_hull();
    assert!(hull.controlled);
    assert_eq!(hull.gain, 1e5);
}

/// A ladder of `n` resistors from a source, with the source's branch current as the last
/// unknown: the shape of an MNA system, large enough for the sparse path.
fn sparse_ladder(n: usize, g: &[f64]) -> (Vec<f64>, Vec<f64>) {
    let size = n + 1;
    let mut rows = vec![0.0; size * size];
    let mut put = |r: usize, c: usize, v: f64| rows[r * size + c] += v;
    for k in 0..n {
        let gk = g[k % g.len()];
        // Resistor from node k to node k+1 (the last one to ground), and a leak to ground.
        put(k, k, gk + 1e-3);
        if k + 1 < n {
            put(k + 1, k + 1, gk);
            put(k, k + 1, -gk);
            put(k + 1, k, -gk);
        }
    }
    // A 5 V source at node 0: its branch row has no diagonal entry.
    put(0, n, 1.0);
    put(n, 0, 1.0);
    let mut b = vec![0.0; size];
    b[n] = 5.0;
    (rows, b)
}

#[test]
fn sparse_elimination_agrees_with_the_library_lu() {
    // Past SPARSE_FROM unknowns the matrix is factored sparse, in a fill-reducing order: the
    // result is no longer the same to the bit, but the same to rounding (checked against
    // nalgebra's dense LU on the same rows).
    for (n, g) in [
        (80, vec![1e-3, 2.0, 47e-6]),
        (150, vec![1e2, 1e-6]),
        (300, vec![0.5]),
    ] {
        let (dense, b) = sparse_ladder(n, &g);
        let size = n + 1;
        let a = Matrix::from_rows(size, &dense);
        assert_eq!(a.entry(0, size - 1), 1.0);
        let ours = solve_linear(&a, &b).expect("regular");
        let theirs = nalgebra_reference(size, &dense, &b).expect("regular");
        for (k, (x, y)) in ours.iter().zip(&theirs).enumerate() {
            assert!(
                (x - y).abs() <= 1e-9 * y.abs().max(1e-6),
                "n {n} unknown {k}: {x} vs {y}"
            );
        }
        // The source sets node 0.
        assert!((ours[0] - 5.0).abs() < 1e-12);
    }
}

#[test]
fn sparse_elimination_reports_degenerate_unknowns() {
    // Two nodes joined only to each other by a resistor, with nothing to ground: their sum is
    // undetermined, and the solve names one of them instead of yielding a huge voltage.
    let n = 100;
    let (mut rows, b) = sparse_ladder(n, &[1.0]);
    let size = n + 1;
    for k in [40, 41] {
        for c in 0..size {
            rows[k * size + c] = 0.0;
            rows[c * size + k] = 0.0;
        }
    }
    rows[40 * size + 40] = 1.0;
    rows[41 * size + 41] = 1.0;
    rows[40 * size + 41] = -1.0;
    rows[41 * size + 40] = -1.0;
    match solve_linear(&Matrix::from_rows(size, &rows), &b) {
        Err(LinearFailure::Degenerate(unknowns)) => {
            assert_eq!(unknowns.len(), 1);
            assert!(unknowns[0] == 40 || unknowns[0] == 41, "{unknowns:?}");
        }
        other => panic!("expected a degenerate unknown, got {:?}", other.map(|_| ())),
    }
    let mut nan = rows.clone();
    nan[0] = f64::NAN;
    assert!(matches!(
        solve_linear(&Matrix::from_rows(size, &nan), &b),
        Err(LinearFailure::NotFinite)
    ));
}
