//! One small function per verb; each turns arguments into library settings and calls the library.

use anyhow::{bail, Context, Result};

use super::args::{
    Cli, Command, DemoArgs, EvalArgs, HeadArg, OcrArgs, ReadArgs, SynthArgs, TrainArgs,
};
use crate::output::text_layer::LayerOptions;
use crate::output::{self, txt};
use crate::pipeline::{self, OcrSettings, TextSource, Transcript};

/// Run one verb.
pub fn run(cli: Cli) -> Result<()> {
    match cli.command {
        Command::Ocr(a) => ocr(a),
        Command::Read(a) => read(a),
        Command::Synth(a) => synth(a),
        Command::Train(a) => train(a),
        Command::Eval(a) => eval(a),
        Command::Demo(a) => demo(a),
    }
}

const NO_MODEL: &str = "no recognition model is available in this build of mistara yet \
    (the line recognizer is still being trained); use --layer-from with a known transcript, \
    or --model with a trained model file";

fn ocr(a: OcrArgs) -> Result<()> {
    if !(a.dpi.is_finite() && (10.0..=4800.0).contains(&a.dpi)) {
        bail!("--dpi {}: give a resolution between 10 and 4800", a.dpi);
    }
    if let Some(n) = a.threads {
        if n == 0 {
            bail!("--threads 0: give at least 1");
        }
    }
    let settings = OcrSettings {
        dpi: a.dpi,
        pages: a
            .pages
            .as_deref()
            .map(pipeline::parse_page_range)
            .transpose()?,
        layer: LayerOptions {
            keep_marks: a.keep_harakat,
        },
        ..OcrSettings::default()
    };
    output::refuse_overwriting_input(&a.output, &a.inputs)?;
    if let Some(t) = &a.txt {
        output::refuse_overwriting_input(t, &a.inputs)?;
    }
    let transcript;
    let source = match (&a.layer_from, &a.model) {
        (Some(path), _) => {
            transcript = Transcript::load(path)?;
            TextSource::Transcript(&transcript)
        }
        (None, _) => bail!(NO_MODEL),
    };
    let out = pipeline::ocr_images(&a.inputs, &settings, source)?;
    if let Some(t) = &a.txt {
        output::write_atomic(t, txt::plain_text(&out.pages).as_bytes(), &a.inputs)?;
    }
    output::write_atomic(&a.output, &out.pdf, &a.inputs)
        .with_context(|| "nothing written".to_string())?;
    Ok(())
}

/// The model from `--model`, or the built-in one.
fn load_recognizer(model: Option<&std::path::Path>) -> Result<crate::recognize::Recognizer> {
    match model {
        Some(path) => Ok(crate::recognize::Recognizer::from_file(path)?),
        None => match crate::recognize::Recognizer::built_in() {
            Some(r) => Ok(r?),
            None => bail!(NO_MODEL),
        },
    }
}

fn read(a: ReadArgs) -> Result<()> {
    let mut rec = load_recognizer(a.model.as_deref())?;
    rec.options.keep_harakat = a.keep_harakat;
    let img = image::open(&a.image)
        .map_err(|e| crate::Error::input(&a.image, format!("cannot read the image: {e}")))?
        .to_luma8();
    // The image is read as one text line; pages go through `mistara ocr`.
    let result = rec.recognize_lines(std::slice::from_ref(&img));
    let mut out = std::io::stdout().lock();
    for r in result {
        use std::io::Write;
        writeln!(out, "{}", r.text)?;
    }
    Ok(())
}

fn synth(_a: SynthArgs) -> Result<()> {
    bail!("`mistara synth` is not built yet")
}

fn set_threads(n: Option<usize>) -> Result<()> {
    if let Some(n) = n {
        if n == 0 {
            bail!("--threads 0: give at least 1");
        }
        // Only the first call in a process can size the global pool; later calls change nothing.
        let _ = rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global();
    }
    Ok(())
}

fn train(a: TrainArgs) -> Result<()> {
    use crate::recognize::net::HeadKind;
    use crate::train::{TrainConfig, TrainEvent};
    set_threads(a.threads)?;
    if a.height % 8 != 0 || a.height < 16 {
        bail!("--height {}: give a multiple of 8, at least 16", a.height);
    }
    if a.batch == 0 || a.minutes.is_nan() || a.minutes <= 0.0 {
        bail!("--batch and --minutes must be above 0");
    }
    let mut cfg = TrainConfig::new(a.data, a.out);
    cfg.valid = a.valid;
    cfg.resume = a.resume;
    cfg.fine_tune = a.fine_tune;
    cfg.seed = a.seed;
    cfg.minutes = a.minutes;
    cfg.epochs = a.epochs;
    cfg.batch_lines = a.batch;
    cfg.lr =
        a.lr.unwrap_or(if cfg.fine_tune.is_some() { 3e-4 } else { 1e-3 });
    cfg.checkpoint_minutes = a.checkpoint_minutes;
    cfg.net = cfg
        .net
        .with_height(a.height)
        .with_hidden(a.hidden)
        .with_head(match a.head {
            HeadArg::Lstm => HeadKind::Lstm,
            HeadArg::Conv => HeadKind::Conv,
        });
    let bar = if a.quiet {
        indicatif::ProgressBar::hidden()
    } else {
        indicatif::ProgressBar::new_spinner()
    };
    let quiet = a.quiet;
    let state = crate::train::train(&cfg, |ev| match ev {
        TrainEvent::Loaded {
            train,
            valid,
            skipped,
        } => bar.println(format!(
            "{train} training lines, {valid} validation lines, {skipped} skipped"
        )),
        TrainEvent::Step {
            epoch,
            batch,
            batches,
            loss,
            lines_per_s,
            left_s,
        } => {
            let line = format!(
                "epoch {epoch} batch {batch}/{batches}  loss {loss:.3}  {lines_per_s:.1} lines/s  {:.0} min left",
                left_s / 60.0
            );
            if quiet && batch % 50 == 0 {
                eprintln!("{line}");
            }
            bar.set_message(line);
        }
        TrainEvent::Validated { epoch, cer } => {
            let line = format!("epoch {epoch}: validation CER {:.2} %", cer * 100.0);
            if quiet {
                eprintln!("{line}")
            } else {
                bar.println(line)
            }
        }
        TrainEvent::Saved(p) => bar.set_message(format!("checkpoint {}", p.display())),
    })?;
    bar.finish_and_clear();
    eprintln!(
        "done: {} steps, {:.2} h of training, best validation CER {}",
        state.steps,
        state.train_s / 3600.0,
        state
            .best_cer
            .map_or("-".into(), |c| format!("{:.2} %", c * 100.0))
    );
    Ok(())
}

fn eval(a: EvalArgs) -> Result<()> {
    set_threads(a.threads)?;
    let mut rec = load_recognizer(a.model.as_deref())?;
    rec.options.keep_harakat = true;
    rec.options.beam_width = a.beam;
    let t0 = std::time::Instant::now();
    let report = crate::eval::evaluate_dir(&a.dir, &rec)?;
    let secs = t0.elapsed().as_secs_f64();
    let f = &report.all;
    println!(
        "{}: {} lines, {} characters, {} words ({:.1} lines/s)",
        a.dir.display(),
        report.lines.len(),
        f.exact.chars,
        f.exact.words,
        report.lines.len() as f64 / secs
    );
    println!("               CER       WER");
    for (name, r) in [("exact", f.exact), ("no harakat", f.no_harakat), ("folded", f.folded)] {
        println!("{name:<12} {:>6.2} %  {:>6.2} %", r.cer() * 100.0, r.wer() * 100.0);
    }
    if !report.per_font.is_empty() {
        println!("per font (CER exact / no harakat / folded, WER exact):");
        for (font, n, f) in &report.per_font {
            println!(
                "  {font:<28} {n:>5} lines  {:>6.2} %  {:>6.2} %  {:>6.2} %  {:>6.2} %",
                f.exact.cer() * 100.0,
                f.no_harakat.cer() * 100.0,
                f.folded.cer() * 100.0,
                f.exact.wer() * 100.0
            );
        }
    }
    if a.worst > 0 {
        println!("worst lines:");
        for (cer, l) in report.worst(a.worst) {
            println!("  {}  CER {:>6.1} %\n    truth: {}\n    read:  {}", l.id, cer * 100.0, l.truth, l.got);
        }
    }
    Ok(())
}

fn demo(_a: DemoArgs) -> Result<()> {
    bail!("`mistara demo` is not built yet")
}
