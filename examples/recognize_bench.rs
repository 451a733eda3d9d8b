//! Inference benchmark: model load time and lines per second on a folder of line images.
//!
//! `cargo run --release --example recognize_bench -- DIR [MODEL] [THREADS]`
//! (without MODEL the built-in model is used). Reads every `*.png` in DIR once to warm up, then
//! times `recognize_lines` over all of them in batches of 64, read as `ocr` reads them (a beam of
//! 8 and the letter model; `MISTARA_BEAM=0` reads the best path alone, as before stop 35).

use std::path::PathBuf;
use std::time::Instant;

use mistara::recognize::letter_model::LetterModel;
use mistara::recognize::Recognizer;

fn main() -> anyhow::Result<()> {
    let mut args = std::env::args().skip(1);
    let dir = PathBuf::from(
        args.next()
            .ok_or_else(|| anyhow::anyhow!("usage: recognize_bench DIR [MODEL] [THREADS]"))?,
    );
    let model = args.next().filter(|m| m != "-");
    if let Some(n) = args.next() {
        rayon::ThreadPoolBuilder::new()
            .num_threads(n.parse()?)
            .build_global()?;
    }
    let t0 = Instant::now();
    let mut rec = match &model {
        Some(m) => Recognizer::from_file(m.as_ref())?,
        None => Recognizer::built_in().ok_or_else(|| anyhow::anyhow!("no built-in model"))??,
    };
    if let Ok(beam) = std::env::var("MISTARA_BEAM") {
        rec.options.beam_width = beam.parse()?;
    }
    let load_ms = t0.elapsed().as_secs_f64() * 1000.0;
    // The letter model the beam search uses is parsed on first use; timed here on its own.
    let t0 = Instant::now();
    let _ = LetterModel::builtin();
    let letters_ms = t0.elapsed().as_secs_f64() * 1000.0;
    let mut paths: Vec<PathBuf> = std::fs::read_dir(&dir)?
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "png"))
        .collect();
    paths.sort();
    let images: Vec<image::GrayImage> = paths
        .iter()
        .map(|p| image::open(p).map(|i| i.to_luma8()))
        .collect::<Result<_, _>>()?;
    let _ = rec.recognize_lines(&images[..images.len().min(16)]);
    let t1 = Instant::now();
    let mut chars = 0;
    for chunk in images.chunks(64) {
        chars += rec
            .recognize_lines(chunk)
            .iter()
            .map(|r| r.text.chars().count())
            .sum::<usize>();
    }
    let s = t1.elapsed().as_secs_f64();
    println!(
        "model load {load_ms:.0} ms, letter model {letters_ms:.0} ms; {} lines in {s:.2} s = {:.1} lines/s ({chars} characters); threads {}",
        images.len(),
        images.len() as f64 / s,
        rayon::current_num_threads()
    );
    Ok(())
}
