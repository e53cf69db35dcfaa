//! Writes a motor-drive netlist of any size for benchmarks: repeated dosing channels, each a
//! 555 one-shot with a pot, a low-side MOSFET, a pump with its freewheel diode, passives and a
//! few of the mistakes real boards carry (an unprotected discharge pin, a missing diode).
//!
//! ```sh
//! cargo run --release --example gen_board -- --channels 100000 > big.cir
//! cargo run --release --example gen_board -- --channels 100000 --nested 10 > deep.cir
//! ```
//!
//! Each channel has 10 elements; `--nested N` wraps channels in N levels of subcircuits
//! (each level instantiating the one below it a fixed number of times).

use std::io::{self, BufWriter, Write};

const CHANNEL_ELEMENTS: usize = 10;

fn channel(out: &mut impl Write, tag: &str, faulty: bool) -> io::Result<()> {
    writeln!(
        out,
        "XU{tag} 0 trig ctl_{tag} v12 ctl_{tag} tc_{tag} tc_{tag} v12 TIMER555"
    )?;
    if faulty {
        writeln!(out, "XRV{tag} v12 tc_{tag} tc_{tag} POT r=10k")?;
    } else {
        writeln!(out, "RS{tag} v12 rs_{tag} 1k")?;
        writeln!(out, "XRV{tag} rs_{tag} tc_{tag} tc_{tag} POT r=10k")?;
    }
    writeln!(out, "C{tag} tc_{tag} 0 100n")?;
    writeln!(out, "CC{tag} ctl_{tag} 0 10n")?;
    writeln!(out, "RG{tag} ctl_{tag} g_{tag} 100")?;
    writeln!(out, "M{tag} d_{tag} g_{tag} 0 0 NCH")?;
    writeln!(out, "XP{tag} v12 d_{tag} PUMP12")?;
    if !faulty {
        writeln!(out, "D{tag} d_{tag} v12 DSW")?;
    }
    writeln!(out, "CD{tag} v12 0 100n")?;
    Ok(())
}

fn main() -> io::Result<()> {
    let mut channels = 100usize;
    let mut nested = 0usize;
    let mut args = std::env::args().skip(1);
    while let Some(arg) = args.next() {
        match arg.as_str() {
            "--channels" => channels = args.next().and_then(|v| v.parse().ok()).unwrap_or(100),
            "--nested" => nested = args.next().and_then(|v| v.parse().ok()).unwrap_or(0),
            _ => {
                eprintln!("usage: gen_board [--channels N] [--nested LEVELS]");
                std::process::exit(2);
            }
        }
    }
    let stdout = io::stdout();
    let mut out = BufWriter::new(stdout.lock());
    writeln!(out, "Generated dosing rack - {channels} channels")?;
    writeln!(out, "V12 v12 0 DC 12")?;
    writeln!(out, "VTRIG trig 0 PULSE(12 0 0 1u 1u 10u 1m)")?;
    if nested == 0 {
        for i in 0..channels {
            channel(&mut out, &i.to_string(), i % 50 == 7)?;
        }
    } else {
        // Level 0 is one channel; every level above instantiates the one below `fan` times.
        let fan = ((channels as f64).powf(1.0 / nested as f64).ceil() as usize).max(2);
        writeln!(out, ".subckt LEVEL0 v12 trig")?;
        channel(&mut out, "c", false)?;
        writeln!(out, ".ends LEVEL0")?;
        for level in 1..=nested {
            writeln!(out, ".subckt LEVEL{level} v12 trig")?;
            for k in 0..fan {
                writeln!(out, "X{k} v12 trig LEVEL{}", level - 1)?;
            }
            writeln!(out, ".ends LEVEL{level}")?;
        }
        writeln!(out, "XTOP v12 trig LEVEL{nested}")?;
    }
    writeln!(out, ".model NCH NMOS (VTO=2.5 KP=4 W=1 L=1)")?;
    writeln!(out, ".model DSW D (IS=30u N=1.05 RS=0.05 BV=40)")?;
    writeln!(out, ".end")?;
    let _ = CHANNEL_ELEMENTS;
    out.flush()
}
