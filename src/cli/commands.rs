//! One small function per verb; each turns arguments into library settings and calls the library.

use std::io::Write;

use anyhow::{bail, Context, Result};

use super::args::{
    Cli, Command, DemoArgs, Distinction, EvalArgs, FindArgs, FontRole, HeadArg, LabelOrderArg,
    ModelChoice, OcrArgs, ReadArgs, SynthArgs, SynthCommon, SynthWhat, TrainArgs,
};
use super::{batch, progress};
use crate::engine::PageEngine;
use crate::input;
use crate::output::review::{ReviewConfig, ReviewWriter};
use crate::output::sidecar::{SidecarPaths, Sidecars};
use crate::output::text_layer::LayerOptions;
use crate::output::{self, txt};
use crate::pipeline::PageReader;
use crate::pipeline::{self, OcrSettings, PageDone, TextSource, Transcript};
use crate::recognize::model_file::LabelOrder;
use crate::recognize::Recognizer;
use crate::search::index::IndexCache;
use crate::synth::{self, corpus::CorpusConfig, shelf::FontSet, SynthConfig};

/// Run one verb.
pub fn run(cli: Cli) -> Result<()> {
    match cli.command {
        Command::Ocr(a) => ocr(a),
        Command::Read(a) => read(a),
        Command::Synth(a) => synth(a),
        Command::Train(a) => train(a),
        Command::Eval(a) => eval(a),
        Command::Demo(a) => demo(a),
        Command::Find(a) => find(a),
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
        strict: a.strict,
        replace_layer: a.replace_layer,
        archival: a.archival,
        ..OcrSettings::default()
    };
    let batch = batch::is_batch(&a)?;
    if !batch && (a.redo || a.shard.is_some()) {
        bail!("--redo and --shard apply to batch runs: give a folder, or an existing folder as -o");
    }
    let engine = match &a.layer_from {
        Some(_) => None,
        None => Some(PageEngine::new(load_recognizer(&a.model, a.keep_harakat)?)),
    };
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(a.threads.unwrap_or(0))
        .build()?;
    if batch {
        return pool.install(|| batch::run(&a, &settings, engine.as_ref()));
    }
    let outputs = batch::DocOutputs {
        pdf: a.output.clone(),
        txt: a.txt.clone(),
        alto: a.alto.clone(),
        report: a.report.clone(),
        review: a.review.clone(),
        debug_dir: a.debug_dir.clone(),
    };
    let transcript;
    let source = match (&a.layer_from, &engine) {
        (Some(path), _) => {
            transcript = Transcript::load(path)?;
            TextSource::Transcript(&transcript)
        }
        (None, Some(engine)) => TextSource::Reader(engine),
        (None, None) => bail!(NO_MODEL),
    };
    pool.install(|| ocr_document(&a.inputs, &outputs, &settings, source, a.quiet))?;
    Ok(())
}

/// Run one document (one PDF, or image files that become its pages) into its outputs, and
/// print its notes: pages left as they were, layers replaced, pages that could not be read.
pub(super) fn ocr_document(
    inputs: &[std::path::PathBuf],
    outputs: &batch::DocOutputs,
    settings: &OcrSettings,
    source: TextSource,
    quiet: bool,
) -> Result<pipeline::OcrOutput> {
    output::refuse_overwriting_input(&outputs.pdf, inputs)?;
    if let Some(t) = &outputs.txt {
        output::refuse_overwriting_input(t, inputs)?;
    }
    let sidecar_paths = SidecarPaths {
        alto: outputs.alto.clone(),
        report: outputs.report.clone(),
    };
    let from_transcript = matches!(source, TextSource::Transcript(_));
    let mut sidecars = Sidecars::create(&sidecar_paths, inputs, from_transcript)?;
    let mut review = outputs
        .review
        .as_deref()
        .map(|dir| ReviewWriter::create(dir, &output_name(&outputs.pdf), ReviewConfig::default()))
        .transpose()?;
    if let Some(dir) = &outputs.debug_dir {
        std::fs::create_dir_all(dir).map_err(|e| crate::error::Error::io(dir, e))?;
    }
    let bar = progress::bar(0, "pages", quiet);
    let mut report = |p: &PageDone| {
        bar.set_length(p.total as u64);
        bar.set_position(p.done as u64);
        if let (Some(dir), Some(image)) = (&outputs.debug_dir, p.image) {
            debug_view(dir, p.done, image, inputs)?;
        }
        sidecars.page(p)?;
        review.as_mut().map_or(Ok(()), |r| r.add_page(p))
    };
    let single_pdf = match inputs {
        [one] => input::sniff_file(one)? == Some(input::Format::Pdf),
        _ => false,
    };
    let out = if single_pdf {
        pipeline::ocr_pdf(&inputs[0], settings, source, &outputs.pdf, &mut report)
    } else {
        pipeline::ocr_images(inputs, settings, source, &outputs.pdf, &mut report)
    }
    .context("nothing written")?;
    bar.finish_and_clear();
    sidecars.commit()?;
    if let Some(r) = review {
        r.finish().context("review not written")?;
    }
    print_notes(&out, quiet);
    if let Some(t) = &outputs.txt {
        output::write_atomic(
            t,
            txt::plain_text(&out.pages, settings.layer).as_bytes(),
            inputs,
        )?;
    }
    Ok(out)
}

/// Tell the user which pages were left as they were, replaced, or could not be read.
fn print_notes(out: &pipeline::OcrOutput, quiet: bool) {
    let list = |pages: &[usize]| {
        let v: Vec<String> = pages.iter().map(usize::to_string).collect();
        v.join(", ")
    };
    for (_, why) in &out.unreadable {
        eprintln!("mistara: warning: {why}; the page is kept without text");
    }
    if quiet {
        return;
    }
    if !out.pages_with_text.is_empty() {
        eprintln!(
            "mistara: note: page(s) {} already carry text and were left as they were",
            list(&out.pages_with_text)
        );
    }
    if !out.layers_replaced.is_empty() {
        eprintln!(
            "mistara: note: page(s) {}: their invisible text layer was replaced by a new one",
            list(&out.layers_replaced)
        );
    }
}

/// The file name of `path`, for titles.
fn output_name(path: &std::path::Path) -> String {
    path.file_name().map_or_else(
        || path.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

/// `--debug-dir`: the analysis of page `n` drawn as `DIR/page-000n.png` (cleaned and analysed
/// again with default settings, as the engine does).
fn debug_view(
    dir: &std::path::Path,
    n: usize,
    image: &crate::page::PageImage,
    inputs: &[std::path::PathBuf],
) -> crate::error::Result<()> {
    let target = dir.join(format!("page-{n:04}.png"));
    let png = crate::layout::debug::page_view_png(image, &Default::default(), &Default::default())
        .map_err(|e| crate::error::Error::Output {
            path: target.clone(),
            why: e.to_string(),
        })?;
    output::write_atomic(&target, &png, inputs)
}

/// Widest beam `--beam` accepts: 16 gained 0.02 points of CER over 8 on val4 and read a fifth
/// fewer lines a second (stop 35), so beyond 64 a line only takes longer.
const MAX_BEAM: usize = 64;

/// The recognizer from `--model`, or the built-in one (the larger one with `--careful`).
fn load_recognizer(choice: &ModelChoice, keep_harakat: bool) -> Result<Recognizer> {
    let built_in = if choice.careful {
        Recognizer::built_in_careful
    } else {
        Recognizer::built_in
    };
    let mut r = match &choice.model {
        Some(path) => Recognizer::from_file(path)?,
        None => match built_in() {
            Some(r) => r?,
            None => bail!(NO_MODEL),
        },
    };
    if choice.beam > MAX_BEAM {
        bail!(
            "--beam {}: give at most {MAX_BEAM} (each reading kept costs time on every line)",
            choice.beam
        );
    }
    if !(choice.lm_weight.is_finite() && choice.lm_weight >= 0.0) {
        bail!("--lm-weight must be 0 or more, not {}", choice.lm_weight);
    }
    r.options.keep_harakat = keep_harakat;
    r.options.beam_width = choice.beam;
    r.options.letter_weight = choice.lm_weight;
    Ok(r)
}

fn read(a: ReadArgs) -> Result<()> {
    let docs = pipeline::open_images(
        std::slice::from_ref(&a.image),
        &OcrSettings {
            dpi: a.dpi,
            ..OcrSettings::default()
        },
    )?;
    let page = docs[0].page(1)?;
    let engine = PageEngine::new(load_recognizer(&a.model, a.keep_harakat)?);
    let (w, h) = page.image.gray.dimensions();
    // One text line: wider than high and under about 0.6 inch tall, too low for two lines of
    // book type with their marks; a short line of three words is not four times wider than
    // high (common practice, no source).
    let single_line = h < w && (h as f32) < 0.6 * page.image.dpi_y;
    let text = if single_line {
        engine.read_single_line(&page.image.gray)
    } else {
        engine.read_page(&page.image)?
    };
    let mut out = std::io::stdout().lock();
    for line in &text.lines {
        writeln!(out, "{}", line.text())?;
    }
    out.flush()?;
    Ok(())
}

fn synth_config(c: &SynthCommon) -> SynthConfig {
    let fonts = match c.fonts {
        FontRole::Train => FontSet::Train,
        FontRole::Heldout => FontSet::Heldout,
        FontRole::All => FontSet::All,
    };
    let corpus = CorpusConfig {
        harakat_share: c.harakat,
        ..CorpusConfig::default()
    };
    SynthConfig {
        fonts,
        families: c.family.clone(),
        seed: c.seed,
        degrade: c.degrade,
        corpus,
        dpi: c.dpi,
        vary: c.vary,
        warp: c.warp,
        nib: c.nib,
    }
}

fn synth(a: SynthArgs) -> Result<()> {
    match a.what {
        SynthWhat::Lines { count, common } => {
            let bar = progress::bar(count as u64, "lines", false);
            synth::write_lines(&synth_config(&common), &common.out, count, &|| bar.inc(1))?;
            bar.finish();
        }
        SynthWhat::Pages { count, common } => {
            let bar = progress::bar(count as u64, "pages", false);
            synth::truth::write_pages(&synth_config(&common), &common.out, count, &|| bar.inc(1))?;
            bar.finish();
        }
        SynthWhat::Book { pages, common } => {
            let bar = progress::bar(pages as u64, "pages", false);
            synth::book::write_book(&synth_config(&common), &common.out, pages, &|| bar.inc(1))?;
            bar.finish();
        }
    }
    Ok(())
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
    let channels: [usize; 3] = match a.channels[..] {
        [c1, c2, c3] if c1 > 0 && c2 > 0 && c3 > 0 => [c1, c2, c3],
        _ => bail!("--channels: give three numbers above 0, like 16,32,64"),
    };
    if a.batch == 0 || a.minutes.is_nan() || a.minutes <= 0.0 {
        bail!("--batch and --minutes must be above 0");
    }
    if a.frame_columns == Some(3) {
        bail!("--frame-columns 3: give 2 or 4");
    }
    let mut data = a.data;
    if let Some(n) = a.rehearse.filter(|&n| n > 0) {
        if let Some(d) = data.iter().find(|d| !d.is_dir()) {
            bail!("{}: no such folder of training lines", d.display());
        }
        let bar = progress::bar(n as u64, "rehearsal lines", a.quiet);
        let dir = crate::train::rehearsal::rehearsal_lines(&a.out, n, a.seed, &|| bar.inc(1))?;
        bar.finish_and_clear();
        // First, so that the lines held back for validation without --valid are the user's own.
        data.insert(0, dir);
    }
    let mut cfg = TrainConfig::new(data, a.out);
    cfg.valid = a.valid;
    cfg.resume = a.resume;
    cfg.fine_tune = a.fine_tune;
    cfg.features_from = a.features_from;
    cfg.widen = a.widen;
    cfg.seed = a.seed;
    cfg.minutes = a.minutes;
    cfg.epochs = a.epochs;
    cfg.batch_lines = a.batch;
    cfg.lr =
        a.lr.unwrap_or(if cfg.fine_tune.is_some() || cfg.widen.is_some() {
            3e-4
        } else {
            1e-3
        });
    cfg.checkpoint_minutes = a.checkpoint_minutes;
    cfg.label_order = a.label_order.map(|o| match o {
        LabelOrderArg::Logical => LabelOrder::Logical,
        LabelOrderArg::Reading => LabelOrder::Reading,
    });
    cfg.net = cfg
        .net
        .with_height(a.height)
        .with_hidden(a.hidden)
        .with_channels(channels)
        .with_head(match a.head {
            HeadArg::Lstm => HeadKind::Lstm,
            HeadArg::Conv => HeadKind::Conv,
        })
        .with_frame_columns(a.frame_columns.map_or(2, usize::from));
    cfg.frame_columns = a.frame_columns.map(usize::from);
    cfg.replicas = a.replicas.map(usize::from);
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
    let mut rec = load_recognizer(&a.model, true)?;
    rec.options.keep_harakat = true;
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
    for (name, r) in [
        ("exact", f.exact),
        ("no harakat", f.no_harakat),
        ("folded", f.folded),
    ] {
        println!(
            "{name:<12} {:>6.2} %  {:>6.2} %",
            r.cer() * 100.0,
            r.wer() * 100.0
        );
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
    let f = report.report_flag_figures();
    println!(
        "flagged for a look (word confidence below {}): {:.1} % of {} words, holding {:.1} % of the {} \
         read wrong (harakat left out)",
        crate::output::report::LOW_CONFIDENCE,
        100.0 * f.flagged as f64 / f.words.max(1) as f64,
        f.words,
        100.0 * f.flagged_wrong as f64 / f.wrong.max(1) as f64,
        f.wrong
    );
    if a.worst > 0 {
        println!("worst lines:");
        for (cer, l) in report.worst(a.worst) {
            println!(
                "  {}  CER {:>6.1} %\n    truth: {}\n    read:  {}",
                l.id,
                cer * 100.0,
                l.truth,
                l.got
            );
        }
    }
    Ok(())
}

fn demo(a: DemoArgs) -> Result<()> {
    let engine = match Recognizer::built_in() {
        Some(r) => Some(PageEngine::new(r?)),
        None => None,
    };
    let bar = progress::bar(0, "pages", false);
    let mut report = |p: &PageDone| {
        bar.set_length(p.total as u64);
        bar.set_position(p.done as u64);
        Ok(())
    };
    let reader = engine.as_ref().map(|e| e as &dyn PageReader);
    let r = crate::demo::run_demo(&a.dir, reader, &mut report)?;
    bar.finish_and_clear();
    let mut out = std::io::stdout().lock();
    writeln!(
        out,
        "An invented library register, {} scanned pages, made searchable:",
        crate::demo::DEMO_PAGES
    )?;
    writeln!(out, "  scan (image-only PDF):  {}", r.scan.display())?;
    writeln!(out, "  searchable PDF:         {}", r.searchable.display())?;
    writeln!(out, "  recognized text:        {}", r.text.display())?;
    writeln!(out, "  ALTO XML, one per page: {}", r.alto.display())?;
    writeln!(out, "  confidence report:      {}", r.report.display())?;
    writeln!(out, "  known text:             {}", r.truth.display())?;
    match r.cer {
        Some(cer) => writeln!(
            out,
            "  character error rate:   {:.1} % (recognized text against the known text)",
            cer * 100.0
        )?,
        None => writeln!(
            out,
            "  no recognition model is built in yet: the text layer was laid from the known text, \
             so this shows the PDF writer, not recognition"
        )?,
    }
    writeln!(
        out,
        "Try a search:  mistara find {} {}",
        r.search_word,
        r.searchable.display()
    )?;
    writeln!(
        out,
        "Recognized text can contain errors: check it against the page image before relying on it."
    )?;
    Ok(())
}

fn find(a: FindArgs) -> Result<()> {
    use crate::text::fold::FoldOptions;
    let mut opts = if a.exact {
        FoldOptions::EXACT
    } else {
        FoldOptions::default()
    };
    for d in &a.distinguish {
        match d {
            Distinction::Harakat => opts.marks = false,
            Distinction::Alef => opts.alef = false,
            Distinction::Ya => opts.ya = false,
            Distinction::TaMarbuta => opts.ta_marbuta = false,
            Distinction::Digits => opts.digits = false,
        }
    }
    opts.strip_article = a.ignore_article;
    let files = crate::search::pdf_files(&a.paths)?;
    if files.is_empty() {
        bail!("no PDF files found under the given paths");
    }
    let index = match (&a.index_dir, a.no_index) {
        (_, true) => None,
        (Some(dir), false) => Some(IndexCache::at(dir)),
        (None, false) => IndexCache::default_location(),
    };
    let mut hits = Vec::new();
    let mut failed = 0;
    let results = crate::search::search_files(&files, &a.query, &opts, a.context, index.as_ref());
    for (file, result) in results {
        match result {
            Ok(r) if r.pages_with_text == 0 => {
                eprintln!(
                    "mistara: {}: has no text layer (run `mistara ocr` on it first)",
                    file.display()
                )
            }
            Ok(r) => hits.extend(r.hits),
            Err(e) => {
                failed += 1;
                eprintln!("mistara: {e}");
            }
        }
    }
    let mut out = std::io::stdout().lock();
    if a.json {
        serde_json::to_writer_pretty(&mut out, &hits)?;
        writeln!(out)?;
    } else {
        for h in &hits {
            writeln!(
                out,
                "{}:{}: {} ⟦{}⟧ {}",
                h.file.display(),
                h.page,
                h.before,
                h.matched,
                h.after
            )?;
        }
    }
    out.flush()?;
    if hits.is_empty() {
        let why = if failed > 0 {
            format!(" ({failed} files could not be read)")
        } else {
            String::new()
        };
        return Err(NotFound(why).into());
    }
    Ok(())
}

/// Nothing matched: exit status 1 with a short message.
#[derive(Debug)]
pub struct NotFound(String);

impl std::fmt::Display for NotFound {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "not found{}", self.0)
    }
}

impl std::error::Error for NotFound {}
