//! One small function per verb; each turns arguments into library settings and calls the library.

use anyhow::{bail, Context, Result};

use super::args::{Cli, Command, DemoArgs, EvalArgs, OcrArgs, ReadArgs, SynthArgs, TrainArgs};
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

fn read(_a: ReadArgs) -> Result<()> {
    bail!(NO_MODEL)
}

fn synth(_a: SynthArgs) -> Result<()> {
    bail!("`mistara synth` is not built yet")
}

fn train(_a: TrainArgs) -> Result<()> {
    bail!("`mistara train` is not built yet")
}

fn eval(_a: EvalArgs) -> Result<()> {
    bail!("`mistara eval` is not built yet")
}

fn demo(_a: DemoArgs) -> Result<()> {
    bail!("`mistara demo` is not built yet")
}
