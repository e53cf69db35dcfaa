//! A generated board of many PWM channels: every channel must come out with its facts, and
//! `cargo test --release --test analysis_speed -- --ignored --nocapture` reports how long each
//! analysis takes on 1,000 channels (`CHANNELS=n` for another count).

mod analysis_support;

use analysis_support::Board;
use kickback::analysis::states::Context;
use kickback::analysis::{stress, switching, timer, Side};
use kickback::circuit::Kind;
use std::time::{Duration, Instant};

/// `channels` channels on one 12 V rail with corners. Each has a 555 astable (RA, a rheostat
/// pot, C, control capacitor) whose output drives, through a gate resistor with a pull-down,
/// either a low-side N-channel into a motor with its freewheel diode or (every fourth) a
/// complementary leg with the motor to ground. Values invented.
fn board(channels: usize) -> Board {
    let mut b = Board::new();
    b.dc("V12", "v12", "0", 12.0);
    b.corners("V12", 11.4, 12.6);
    for k in 0..channels {
        let n = |s: &str| format!("{s}_{k}");
        b.timer(
            &format!("XU{k}"),
            [
                "0",
                &n("tc"),
                &n("out"),
                "v12",
                &n("ctl"),
                &n("tc"),
                &n("dis"),
                "v12",
            ],
        );
        b.r(&format!("RA{k}"), "v12", &n("dis"), 1e3);
        b.pot(&format!("XRV{k}"), &n("dis"), &n("tc"), &n("tc"), 10e3);
        b.c(&format!("CT{k}"), &n("tc"), "0", 10e-9);
        b.c(&format!("CC{k}"), &n("ctl"), "0", 10e-9);
        b.r(&format!("RG{k}"), &n("out"), &n("g"), 100.0);
        b.r(&format!("RPD{k}"), &n("g"), "0", 100e3);
        let motor = [("resistance", 8.0), ("inductance", 1.5e-3)];
        if k % 4 == 3 {
            b.pmos(&format!("MH{k}"), &n("d"), &n("g"), "v12", -2.5, 2.0);
            b.nmos(&format!("ML{k}"), &n("d"), &n("g"), "0", 2.5, 4.0);
            b.load(&format!("XM{k}"), Kind::DcMotor, &n("d"), "0", &motor);
        } else {
            b.nmos(&format!("M{k}"), &n("d"), &n("g"), "0", 2.5, 4.0);
            b.load(&format!("XM{k}"), Kind::DcMotor, "v12", &n("d"), &motor);
            b.diode(&format!("D{k}"), Kind::Schottky, &n("d"), "v12");
        }
    }
    b
}

#[test]
fn every_channel_gets_its_facts() {
    let channels = 12;
    let (a, findings) = board(channels).analyze();
    assert!(
        findings.iter().all(|f| f.rule != "solve-failed"),
        "{findings:?}"
    );
    assert_eq!(a.loads.len(), channels);
    assert_eq!(a.switches.len(), channels + channels / 4);
    for s in &a.switches {
        assert!(s.driver.is_some() && s.vgs_on_v.is_some());
        // The lower switch of a leg brakes the motor to ground: no branch of its own.
        let brakes = s.side == Side::Bridge && s.kind == Kind::Nmos;
        assert_eq!(s.load.is_some(), !brakes);
        if s.side == Side::Low {
            assert!(!s.freewheel.is_empty());
        }
    }
    // RA, RG, RPD and the pot per channel.
    assert_eq!(a.resistors.len(), 4 * channels);
    assert_eq!(a.capacitors.len(), 2 * channels);
}

/// CPU time of this thread (Linux), which a busy machine disturbs less than wall time;
/// wall time elsewhere.
fn cpu_now() -> Duration {
    std::fs::read_to_string("/proc/thread-self/schedstat")
        .ok()
        .and_then(|t| t.split_whitespace().next()?.parse::<u64>().ok())
        .map(Duration::from_nanos)
        .unwrap_or_else(|| START.with(|s| s.elapsed()))
}

thread_local! {
    static START: Instant = Instant::now();
}

fn timed<T>(f: impl FnOnce() -> T) -> (T, Duration) {
    let t = cpu_now();
    let out = f();
    (out, cpu_now().saturating_sub(t))
}

#[test]
#[ignore = "timing; run in release with --ignored --nocapture"]
fn thousand_channels() {
    let channels = std::env::var("CHANNELS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(1000);
    let b = board(channels);
    let (circuit, built) = timed(|| b.circuit());
    let (cx, context) = timed(|| Context::new(&b.netlist, &circuit, &b.config));
    let ((timers, _), timing) = timed(|| timer::analyze(&cx));
    let ((switches, loads, _), switching_time) = timed(|| switching::analyze(&cx, &timers));
    let ((resistors, capacitors, _), stress_time) =
        timed(|| stress::analyze(&cx, &timers, &switches));
    println!(
        "{channels} channels, {} devices, CPU time: build {built:?}, context {context:?}, \
         timers {timing:?}, switching {switching_time:?} ({} switches, {} loads), \
         stress {stress_time:?} ({} resistors, {} capacitors)",
        circuit.devices().len(),
        switches.len(),
        loads.len(),
        resistors.len(),
        capacitors.len()
    );
    assert_eq!(loads.len(), channels);
}
