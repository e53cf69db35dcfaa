//! Writes a motor-drive netlist of any size for benchmarks (see `board.rs` for what a channel
//! holds).
//!
//! ```sh
//! cargo run --release --example gen_board -- --channels 100000 > big.cir
//! cargo run --release --example gen_board -- --channels 100000 --nested 10 > deep.cir
//! cargo run --release --example gen_board -- --channels 5 --files 200 --out many/
//! ```
//!
//! Each channel has 10 elements. `--shape bridge` writes the second channel shape instead (an
//! H-bridge with a 555 per leg and a relay, 21 elements a channel; flat boards only).
//! `--nested N` puts the channels in N levels of subcircuits.
//! `--files N --out DIR` writes N boards and their `kickback.toml` into DIR instead of one
//! board to standard output.

mod board;

use std::fs;
use std::io::{self, BufWriter, Write};
use std::path::PathBuf;

struct Options {
    channels: usize,
    nested: usize,
    files: usize,
    out: Option<PathBuf>,
    shape: board::Shape,
}

fn usage() -> ! {
    eprintln!("usage: gen_board [--channels N] [--shape dosing|bridge] [--nested LEVELS] [--files N --out DIR]");
    std::process::exit(2);
}

fn options() -> Options {
    let mut o = Options {
        channels: 100,
        nested: 0,
        files: 1,
        out: None,
        shape: board::Shape::Dosing,
    };
    let mut args = std::env::args().skip(1);
    while let Some(arg) = args.next() {
        let value = args.next().unwrap_or_else(|| usage());
        match arg.as_str() {
            "--channels" => o.channels = value.parse().unwrap_or_else(|_| usage()),
            "--nested" => o.nested = value.parse().unwrap_or_else(|_| usage()),
            "--files" => o.files = value.parse().unwrap_or_else(|_| usage()),
            "--out" => o.out = Some(PathBuf::from(value)),
            "--shape" => o.shape = board::Shape::parse(&value).unwrap_or_else(|| usage()),
            _ => usage(),
        }
    }
    if o.nested != 0 && o.shape != board::Shape::Dosing {
        usage();
    }
    o
}

fn write_board(out: &mut impl Write, o: &Options) -> io::Result<()> {
    if o.nested == 0 {
        match o.shape {
            board::Shape::Dosing => board::write_flat(out, o.channels),
            shape => board::write_flat_shape(out, o.channels, shape),
        }
    } else {
        board::write_nested(out, o.channels, o.nested)
    }
}

fn main() -> io::Result<()> {
    let o = options();
    let Some(dir) = &o.out else {
        let stdout = io::stdout();
        let mut out = BufWriter::new(stdout.lock());
        write_board(&mut out, &o)?;
        return out.flush();
    };
    fs::create_dir_all(dir)?;
    fs::write(dir.join("kickback.toml"), board::CONFIG)?;
    let _ = (board::CHANNEL_ELEMENTS, o.shape.elements());
    for i in 0..o.files {
        let mut out = BufWriter::new(fs::File::create(dir.join(format!("board{i:04}.cir")))?);
        write_board(&mut out, &o)?;
        out.flush()?;
    }
    Ok(())
}
