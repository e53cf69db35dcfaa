//! Generated motor-drive boards for benchmarks, in two channel shapes, with the mistakes real
//! boards carry on a few channels:
//!
//! - dosing (the default): a 555 one-shot with a pot, a low-side MOSFET, a pump with its
//!   freewheel diode and passives (an unprotected discharge pin, a missing diode);
//! - bridge: an H-bridge whose two legs are each driven by their own 555 astable, with a relay
//!   on an NPN beside it (a relay without its diode).
//!
//! Shared by the `gen_board` example and the criterion benches.

use std::io::{self, Write};

/// Elements in one channel of the dosing shape.
pub const CHANNEL_ELEMENTS: usize = 10;
/// Elements in one channel of the bridge shape.
pub const BRIDGE_CHANNEL_ELEMENTS: usize = 21;

/// What one channel of a generated board holds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Shape {
    Dosing,
    Bridge,
}

// The criterion benches use the dosing shape only.
#[allow(dead_code)]
impl Shape {
    pub fn parse(name: &str) -> Option<Shape> {
        match name {
            "dosing" => Some(Shape::Dosing),
            "bridge" => Some(Shape::Bridge),
            _ => None,
        }
    }

    pub fn elements(self) -> usize {
        match self {
            Shape::Dosing => CHANNEL_ELEMENTS,
            Shape::Bridge => BRIDGE_CHANNEL_ELEMENTS,
        }
    }

    fn channel(self, out: &mut impl Write, tag: &str, faulty: bool) -> io::Result<()> {
        match self {
            Shape::Dosing => channel(out, tag, faulty),
            Shape::Bridge => bridge_channel(out, tag, faulty),
        }
    }
}

/// One channel in fifty is wired wrong, as on a board nobody has reviewed.
const FAULT_EVERY: usize = 50;

/// Part data the generated boards need, as `kickback.toml` beside them.
pub const CONFIG: &str = "\
# Part data for the generated benchmark boards.
[parts.TIMER555]
kind = \"timer-555\"

[parts.POT]
kind = \"potentiometer\"

[parts.PUMP12]
kind = \"dc-motor\"
rated_voltage = 12
resistance = 8
inductance = \"1m\"

[parts.WIPER12]
kind = \"dc-motor\"
rated_voltage = 12
resistance = 6
inductance = \"2m\"

[parts.RELAY12]
kind = \"relay-coil\"
rated_voltage = 12
resistance = 240
inductance = \"60m\"
";

fn channel(out: &mut impl Write, tag: &str, faulty: bool) -> io::Result<()> {
    writeln!(
        out,
        "XU{tag} 0 trig out_{tag} v12 ctl_{tag} tc_{tag} tc_{tag} v12 TIMER555"
    )?;
    if faulty {
        writeln!(out, "XRV{tag} v12 tc_{tag} tc_{tag} POT r=10k")?;
    } else {
        writeln!(out, "RS{tag} v12 rs_{tag} 2.7k")?;
        writeln!(out, "XRV{tag} rs_{tag} tc_{tag} tc_{tag} POT r=10k")?;
    }
    writeln!(out, "C{tag} tc_{tag} 0 2.2n")?;
    writeln!(out, "CC{tag} ctl_{tag} 0 10n")?;
    writeln!(out, "RG{tag} out_{tag} g_{tag} 100")?;
    writeln!(out, "M{tag} d_{tag} g_{tag} 0 0 NCH")?;
    writeln!(out, "XP{tag} v12 d_{tag} PUMP12")?;
    if !faulty {
        writeln!(out, "D{tag} d_{tag} v12 DSW")?;
    }
    writeln!(out, "CD{tag} v12 0 100n")?;
    Ok(())
}

/// One leg of an H-bridge: a 555 astable (its own timing parts) driving a complementary pair
/// through one gate resistor; the leg's midpoint is `mid`.
fn bridge_leg(out: &mut impl Write, tag: &str, leg: &str, rb: &str) -> io::Result<()> {
    let t = format!("{leg}{tag}");
    writeln!(
        out,
        "XU{t} 0 tc_{t} o_{t} v12 ctl_{t} tc_{t} dis_{t} v12 TIMER555"
    )?;
    writeln!(out, "RA{t} v12 dis_{t} 1k")?;
    writeln!(out, "RB{t} dis_{t} tc_{t} {rb}")?;
    writeln!(out, "C{t} tc_{t} 0 4.7n")?;
    writeln!(out, "CC{t} ctl_{t} 0 10n")?;
    writeln!(out, "RG{t} o_{t} g_{t} 47")?;
    writeln!(out, "MP{t} m{leg}_{tag} g_{t} v12 v12 PCH")?;
    writeln!(out, "MN{t} m{leg}_{tag} g_{t} 0 0 NCH")
}

fn bridge_channel(out: &mut impl Write, tag: &str, faulty: bool) -> io::Result<()> {
    bridge_leg(out, tag, "A", "10k")?;
    bridge_leg(out, tag, "B", "12k")?;
    writeln!(out, "XW{tag} mA_{tag} mB_{tag} WIPER12")?;
    // The relay follows leg A's timer through a base resistor.
    writeln!(out, "RQ{tag} o_A{tag} b_{tag} 2.2k")?;
    writeln!(out, "Q{tag} k_{tag} b_{tag} 0 QSW")?;
    writeln!(out, "XK{tag} v12 k_{tag} RELAY12")?;
    if !faulty {
        writeln!(out, "DK{tag} k_{tag} v12 DSW")?;
    }
    Ok(())
}

fn header(out: &mut impl Write, title: &str) -> io::Result<()> {
    writeln!(out, "{title}")?;
    writeln!(out, "V12 v12 0 DC 12")?;
    // 25 kHz triggers: the longest one-shot pulse, 1.1·12.7 kΩ·2.2 nF ≈ 31 µs, fits the 40 µs.
    writeln!(out, "VTRIG trig 0 PULSE(12 0 0 100n 100n 2u 40u)")
}

fn footer(out: &mut impl Write) -> io::Result<()> {
    writeln!(out, ".model NCH NMOS (VTO=2.5 KP=4 W=1 L=1)")?;
    writeln!(out, ".model PCH PMOS (VTO=-2.5 KP=2 W=1 L=1)")?;
    writeln!(out, ".model QSW NPN (BF=120 IS=1e-14)")?;
    writeln!(out, ".model DSW D (IS=30u N=1.05 RS=0.05 BV=40)")?;
    writeln!(out, ".end")
}

/// A flat board of `channels` channels.
pub fn write_flat(out: &mut impl Write, channels: usize) -> io::Result<()> {
    write_flat_shape(out, channels, Shape::Dosing)
}

/// A flat board of `channels` channels of the given shape.
pub fn write_flat_shape(out: &mut impl Write, channels: usize, shape: Shape) -> io::Result<()> {
    let what = match shape {
        Shape::Dosing => "dosing rack",
        Shape::Bridge => "wiper bank",
    };
    match shape {
        Shape::Dosing => header(out, &format!("Generated {what} - {channels} channels"))?,
        Shape::Bridge => {
            // Free-running timers: no trigger source, a bulk capacitor on the rail.
            writeln!(out, "Generated {what} - {channels} channels")?;
            writeln!(out, "V12 v12 0 DC 12")?;
            writeln!(out, "CBULK v12 0 470u")?;
        }
    }
    for i in 0..channels {
        shape.channel(out, &i.to_string(), i % FAULT_EVERY == 7)?;
    }
    footer(out)
}

/// How many times each level instantiates the one below, so that the product comes as close
/// to `target` as whole numbers allow: every fan is ⌊target^(1/levels)⌋ or one more.
pub fn fans(target: usize, levels: usize) -> Vec<usize> {
    let levels = levels.max(1);
    let base = ((target.max(1) as f64).powf(1.0 / levels as f64).floor() as usize).max(1);
    let mut fans = vec![base; levels];
    let product = |f: &[usize]| f.iter().fold(1usize, |p, &x| p.saturating_mul(x));
    for i in 0..levels {
        let mut bumped = fans.clone();
        bumped[i] += 1;
        let closer = product(&bumped).abs_diff(target) < product(&fans).abs_diff(target);
        if closer {
            fans = bumped;
        }
    }
    fans
}

/// A board of about `channels` channels in `levels` levels of subcircuits: level 1 is a bank of
/// fifty channels (one of them faulty), every level above instantiates the one below.
pub fn write_nested(out: &mut impl Write, channels: usize, levels: usize) -> io::Result<()> {
    let levels = levels.max(1);
    let banks = channels.div_ceil(FAULT_EVERY).max(1);
    let fans = fans(banks, levels - 1);
    let total = fans.iter().product::<usize>() * FAULT_EVERY;
    header(
        out,
        &format!("Generated dosing rack - {total} channels in {levels} levels"),
    )?;
    writeln!(out, ".subckt LEVEL1 v12 trig")?;
    for i in 0..FAULT_EVERY {
        channel(out, &i.to_string(), i == 7)?;
    }
    writeln!(out, ".ends LEVEL1")?;
    let mut top = 1;
    for (level, fan) in (2..=levels).zip(fans.iter().copied()) {
        writeln!(out, ".subckt LEVEL{level} v12 trig")?;
        for k in 0..fan {
            writeln!(out, "X{k} v12 trig LEVEL{}", level - 1)?;
        }
        writeln!(out, ".ends LEVEL{level}")?;
        top = level;
    }
    writeln!(out, "XTOP v12 trig LEVEL{top}")?;
    footer(out)
}
