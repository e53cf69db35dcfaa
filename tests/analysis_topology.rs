//! Switch–load topology: sides, bridge legs, freewheel kinds, drivers behind pre-drivers and
//! bootstraps.

mod analysis_support;

use analysis_support::{assert_close, Board};
use kickback::analysis::{FreewheelKind, Side};
use kickback::circuit::Kind;

#[test]
fn n_n_half_bridge_with_a_floating_top_drive() {
    let mut b = Board::new();
    b.dc("V12", "v12", "0", 12.0);
    // The top gate's drive floats on the switched node (an isolated driver's output).
    b.pulse("VGH", "gh", "out", 0.0, 10.0, 10e-6, 40e-6);
    b.pulse("VGL", "gl", "0", 0.0, 10.0, 10e-6, 40e-6);
    let top = b.nmos("MH", "v12", "gh", "out", 2.0, 4.0);
    let bottom = b.nmos("ML", "out", "gl", "0", 2.0, 4.0);
    b.diode("DH", Kind::Schottky, "out", "v12");
    b.diode("DL", Kind::Schottky, "0", "out");
    b.load("XM", Kind::DcMotor, "out", "0", &[("resistance", 6.0)]);
    let (a, _) = b.analyze();
    let t = a.switches.iter().find(|s| s.device == top).expect("MH");
    let l = a.switches.iter().find(|s| s.device == bottom).expect("ML");
    assert_eq!((t.side, l.side), (Side::Bridge, Side::Bridge));
    assert_eq!(t.bridge_partner, Some(bottom));
    let driver = t.driver.as_ref().expect("top driver");
    assert_eq!(driver.device, b.id("VGH"));
    // A drive riding the switched node holds V_GS itself: not a follower.
    assert!(driver.boosted);
    assert!(!t.follower);
    assert_close(
        t.vgs_on_v.as_ref().expect("vgs").min,
        10.0,
        1e-6,
        "floating drive",
    );
    // On states hold the other leg off: the motor gets nearly the full rail.
    let load = &a.loads[0];
    assert!(load.peak_v.as_ref().expect("peak").max > 11.5);
    // DL spans the motor (its far end is ground); DH sits across MH itself and is no
    // freewheel path for it; ML's body diode is.
    let kinds: Vec<(usize, FreewheelKind)> =
        t.freewheel.iter().map(|f| (f.device, f.kind)).collect();
    assert_eq!(
        kinds,
        vec![
            (b.id("DL"), FreewheelKind::AcrossLoad),
            (bottom, FreewheelKind::OppositeBodyDiode)
        ]
    );
    assert!(t.freewheel.iter().all(|f| !f.reversed));
}

#[test]
fn tvs_across_the_switch_is_a_clamp_and_a_reversed_one_holds_the_load_on() {
    for reversed in [false, true] {
        let mut b = Board::new();
        b.dc("V24", "v24", "0", 24.0);
        b.pulse("VG", "g", "0", 0.0, 10.0, 0.5e-3, 1e-3);
        b.nmos("M1", "d", "g", "0", 2.0, 4.0);
        b.load("XK", Kind::RelayCoil, "v24", "d", &[("resistance", 300.0)]);
        if reversed {
            b.diode("DZ", Kind::Tvs, "d", "0");
        } else {
            b.diode("DZ", Kind::Tvs, "0", "d");
        }
        let (a, _) = b.analyze();
        let fw = &a.switches[0].freewheel;
        assert_eq!(fw.len(), 1);
        assert_eq!(fw[0].kind, FreewheelKind::Clamp);
        assert_eq!(fw[0].reversed, reversed);
        if reversed {
            // Forward from drain to ground in the off state: the coil stays energised.
            assert!(fw[0].off_state_current_a.expect("forward current") > 0.05);
            assert_eq!(a.loads[0].freewheel, None);
        } else {
            assert_eq!(a.loads[0].freewheel, Some(b.id("DZ")));
            assert_eq!(fw[0].avg_current_a, None);
        }
    }
}

#[test]
fn p_channel_behind_an_npn_pre_driver() {
    let mut b = Board::new();
    b.dc("V12", "v12", "0", 12.0);
    b.pulse("VPIN", "pin", "0", 0.0, 3.3, 0.5e-3, 1e-3);
    b.r("RB", "pin", "qb", 4.7e3);
    let q = b.npn("QD", "g", "qb", "0", 100.0);
    b.r("RPU", "v12", "g", 10e3);
    let m = b.pmos("MP", "d", "g", "v12", -2.0, 4.0);
    b.load("XM", Kind::DcMotor, "d", "0", &[("resistance", 10.0)]);
    b.diode("DF", Kind::Schottky, "0", "d");
    let (a, _) = b.analyze();
    let sw = a.switches.iter().find(|s| s.device == m).expect("MP");
    assert_eq!(sw.side, Side::High);
    assert!(!sw.follower);
    let driver = sw.driver.as_ref().expect("driver");
    assert_eq!(driver.device, q);
    assert_eq!(driver.control, Some(b.id("VPIN")));
    // Pin high → NPN saturates → gate pulled low → P-channel on.
    assert_eq!(driver.on_when_high, Some(true));
    let vgs = sw.vgs_on_v.as_ref().expect("vgs").max;
    assert!(vgs < -11.5 && vgs > -12.0, "{vgs}");
    let off = sw.vgs_off_v.as_ref().expect("vgs off");
    assert!(off.min.abs() < 1e-3 && off.max.abs() < 1e-3);
    // The enhancement helpers turn the P-channel's sign round.
    assert!(sw.enhancement_on().expect("enh").min > 11.5);
    assert_close(sw.duty.as_ref().expect("duty").max, 0.5, 1e-5, "duty");
}

#[test]
fn bootstrapped_high_side_is_not_a_follower() {
    let mut b = Board::new();
    b.dc("V12", "v12", "0", 12.0);
    b.pulse("VG", "g", "0", 0.0, 10.0, 10e-6, 40e-6);
    b.nmos("MH", "v12", "g", "s", 2.0, 4.0);
    b.load("XM", Kind::DcMotor, "s", "0", &[("resistance", 6.0)]);
    b.diode("DF", Kind::Schottky, "0", "s");
    // Bootstrap: a diode from the rail charges a capacitor that rides the source.
    b.diode("DB", Kind::Diode, "v12", "vb");
    b.c("CB", "vb", "s", 1e-6);
    let (a, _) = b.analyze();
    let sw = &a.switches[0];
    let driver = sw.driver.as_ref().expect("driver");
    assert!(driver.boosted);
    assert_eq!(driver.bootstrap, Some((b.id("CB"), b.id("DB"))));
    assert!(!sw.follower);
    // Bootstrap estimate (common practice): the feed less a diode drop, 12 − 0.7 V.
    assert_close(
        sw.vgs_on_v.as_ref().expect("vgs").min,
        11.3,
        1e-9,
        "bootstrap",
    );
}

#[test]
fn sense_resistor_still_makes_a_low_side() {
    let mut b = Board::new();
    b.dc("V12", "v12", "0", 12.0);
    b.pulse("VG", "g", "0", 0.0, 10.0, 10e-6, 40e-6);
    b.nmos("M1", "d", "g", "sense", 2.0, 4.0);
    b.r("RS", "sense", "0", 0.1);
    b.load("XM", Kind::DcMotor, "v12", "d", &[("resistance", 6.0)]);
    b.diode("DF", Kind::Schottky, "d", "v12");
    let (a, _) = b.analyze();
    assert_eq!(a.switches[0].side, Side::Low);
    // Anchored on ground through the 0.1 Ω sense resistor.
    assert_eq!(a.switches[0].anchor_net, b.circuit().ground());
    assert_eq!(a.loads[0].switch, Some(b.id("M1")));
}

#[test]
fn a_motor_straight_on_the_rail_is_always_on() {
    let mut b = Board::new();
    b.dc("V12", "v12", "0", 12.0);
    b.load(
        "XF",
        Kind::DcMotor,
        "v12",
        "0",
        &[("resistance", 24.0), ("rated_voltage", 12.0)],
    );
    let (a, _) = b.analyze();
    let load = &a.loads[0];
    assert_eq!(load.switch, None);
    assert_eq!(load.driven_by, None);
    assert_close(load.duty.as_ref().expect("duty").max, 1.0, 0.0, "always on");
    assert_close(
        load.effective_v.as_ref().expect("eff").max,
        12.0,
        1e-12,
        "effective",
    );
    assert_close(
        load.current_a.as_ref().expect("i").max,
        0.5,
        1e-12,
        "current",
    );
}
