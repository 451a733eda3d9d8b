//! Command-line arguments (clap derive). Turned into library settings in `commands`.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand, ValueEnum};

use crate::recognize;

/// mistara — makes scanned Arabic books searchable.
///
/// Recognized text can contain errors: check it against the page image before relying on it.
#[derive(Debug, Parser)]
#[command(name = "mistara", version, about, long_about = None, propagate_version = true)]
pub struct Cli {
    /// The task to run.
    #[command(subcommand)]
    pub command: Command,
}

/// The verbs. Their names are fixed: scripts depend on them.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Make scanned pages searchable: write a PDF that looks like the scan, with an invisible text layer.
    Ocr(OcrArgs),
    /// Recognize one image (a page or a single text line) and print its text, one line per line.
    Read(ReadArgs),
    /// Make synthetic training and test data with exact ground truth.
    Synth(SynthArgs),
    /// Train or fine-tune the line recognizer.
    Train(TrainArgs),
    /// Measure recognition accuracy (CER, WER) on transcribed lines.
    Eval(EvalArgs),
    /// Build a small invented scanned book and run the whole pipeline on it.
    Demo(DemoArgs),
    /// Search the text of PDFs (files or folders), Arabic-aware.
    Find(FindArgs),
}

/// A spelling difference search ignores unless told to keep it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Distinction {
    /// Harakat and tatweel.
    Harakat,
    /// أ إ آ ٱ versus ا.
    Alef,
    /// ى versus ي.
    Ya,
    /// ة versus ه.
    TaMarbuta,
    /// Arabic-Indic versus Western digits.
    Digits,
}

/// `mistara find`.
#[derive(Debug, Args)]
pub struct FindArgs {
    /// The word or phrase to look for.
    pub query: String,
    /// PDF files or folders (searched recursively).
    #[arg(required = true)]
    pub paths: Vec<PathBuf>,
    /// Match exactly: keep every spelling difference.
    #[arg(long)]
    pub exact: bool,
    /// Spelling differences to keep (by default all are ignored), comma-separated.
    #[arg(long, value_enum, value_delimiter = ',', value_name = "KINDS")]
    pub distinguish: Vec<Distinction>,
    /// Ignore a leading definite article ال on every word.
    #[arg(long)]
    pub ignore_article: bool,
    /// Print hits as JSON.
    #[arg(long)]
    pub json: bool,
    /// Characters of context on each side of a hit.
    #[arg(long, value_name = "N", default_value_t = 30)]
    pub context: usize,
    /// Read every PDF afresh; neither use nor update the search index.
    #[arg(long)]
    pub no_index: bool,
    /// Keep the search index in this folder (default: $XDG_CACHE_HOME/mistara/find-index or
    /// ~/.cache/mistara/find-index). Nothing is ever written beside the PDFs.
    #[arg(long, value_name = "DIR", conflicts_with = "no_index")]
    pub index_dir: Option<PathBuf>,
}

/// `mistara ocr`.
///
/// One document: one PDF, or image files that become the pages of one PDF, written to `-o FILE`.
/// Batch: when an input is a folder, when `-o` names an existing folder, or when several inputs
/// include a PDF, every document found is written to its own file under the `-o` folder, its
/// path below the folder given mirrored (`scans/2024/case-17.tif` → `OUT/2024/case-17.pdf`).
/// In a folder, each PDF and each TIFF is a document; the PNG, JPEG and JPEG 2000 files lying
/// directly in one folder are the pages of one document named after the folder. Options that
/// name an output or a transcript then name a folder, mirrored the same way.
#[derive(Debug, Args)]
pub struct OcrArgs {
    /// Input files or folders: one PDF, image files (PNG, JPEG, JPEG 2000, TIFF) that become the
    /// pages of one PDF, or folders of documents (batch).
    #[arg(required = true)]
    pub inputs: Vec<PathBuf>,
    /// The searchable PDF to write; in batch, the folder the PDFs go to.
    #[arg(short, long, value_name = "OUT.pdf|DIR")]
    pub output: PathBuf,
    /// Batch: also do documents whose outputs already exist and are newer than their inputs
    /// (by default those are skipped, so an interrupted batch resumes where it stopped).
    #[arg(long)]
    pub redo: bool,
    /// Batch: take only part I of N of the documents (I from 1), e.g. `--shard 3/8` on the
    /// third machine of eight. Each document's part depends on its own name only.
    #[arg(long, value_name = "I/N")]
    pub shard: Option<String>,
    /// A page that cannot be decoded or analysed fails its document (nothing written); by
    /// default it is reported and kept without text.
    #[arg(long)]
    pub strict: bool,
    /// Replace an invisible text layer that PDF pages already carry (e.g. from an earlier run)
    /// by a new one; pages that show visible text are never changed.
    #[arg(long)]
    pub replace_layer: bool,
    /// Also write the text as UTF-8: lines in reading order, pages separated by form feed (in
    /// batch, a folder for the `.txt` files).
    #[arg(long, value_name = "FILE|DIR")]
    pub txt: Option<PathBuf>,
    /// Also write one ALTO 4 XML file per page into this folder (DIR/page-0001.xml, …).
    #[arg(long, value_name = "DIR")]
    pub alto: Option<PathBuf>,
    /// Also write a confidence report (JSON): per page lines, words, confidence, pages flagged
    /// for a human look.
    #[arg(long, value_name = "FILE.json")]
    pub report: Option<PathBuf>,
    /// Write an archival PDF (PDF/A-2b): XMP metadata, sRGB output intent, document ID.
    #[arg(long)]
    pub archival: bool,
    /// Worker threads (default: all cores).
    #[arg(long, value_name = "N")]
    pub threads: Option<usize>,
    /// Pages to process, e.g. `1-5,9` (1-based; others are copied without text).
    #[arg(long, value_name = "RANGE")]
    pub pages: Option<String>,
    /// Resolution assumed for images that carry none, and used to rasterize PDF pages that are not a single scan.
    #[arg(long, value_name = "N", default_value_t = 300.0)]
    pub dpi: f32,
    /// Which model reads the lines.
    #[command(flatten)]
    pub model: ModelChoice,
    /// Keep harakat and tatweel in the text (off: text is easier to search).
    #[arg(long)]
    pub keep_harakat: bool,
    /// Lay the text layer from a known transcript (JSON with words and boxes, e.g. a proofread
    /// or ground-truth file) instead of recognizing the pages (in batch, a folder holding one
    /// `.json` per document, named like its PDF).
    #[arg(long, value_name = "FILE.json|DIR")]
    pub layer_from: Option<PathBuf>,
    /// Also write a proofreading view into this folder: `index.html` (opens from disk, no server)
    /// showing each page image with its word boxes and the text beside it, flagged words marked.
    #[arg(long, value_name = "DIR")]
    pub review: Option<PathBuf>,
    /// Write a picture of each read page's analysis to this folder (`page-0001.png`, ...): the
    /// straightened page with regions coloured by kind, line boxes and baselines.
    #[arg(long, value_name = "DIR")]
    pub debug_dir: Option<PathBuf>,
    /// No progress display.
    #[arg(short, long)]
    pub quiet: bool,
}

/// Which recognition model reads the lines (`ocr`, `read`, `eval`).
#[derive(Debug, Args)]
pub struct ModelChoice {
    /// Recognition model file, instead of the one built into mistara.
    #[arg(long, value_name = "FILE")]
    pub model: Option<PathBuf>,
    /// Read lines with the larger built-in model: about a fifth fewer wrong characters on lines,
    /// half as many lines a second.
    #[arg(long, conflicts_with = "model")]
    pub careful: bool,
    /// Readings of a line kept side by side while it is read (0 or 1: only the likeliest at
    /// each step, fastest).
    #[arg(long, value_name = "N", default_value_t = recognize::DEFAULT_BEAM)]
    pub beam: usize,
    /// Weight of the Arabic letter model that helps choose between readings (0: the network's
    /// reading alone; needs a beam of 2 or more).
    #[arg(long, value_name = "W", default_value_t = recognize::DEFAULT_LETTER_WEIGHT)]
    pub lm_weight: f32,
}

/// `mistara read`.
#[derive(Debug, Args)]
pub struct ReadArgs {
    /// The image to read.
    pub image: PathBuf,
    /// Which model reads the lines.
    #[command(flatten)]
    pub model: ModelChoice,
    /// Keep harakat and tatweel in the text.
    #[arg(long)]
    pub keep_harakat: bool,
    /// Resolution assumed when the image carries none.
    #[arg(long, value_name = "N", default_value_t = 300.0)]
    pub dpi: f32,
}

/// Which fonts of the shelf to draw with.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FontRole {
    /// Fonts marked `train` in fonts_open/fonts.toml.
    Train,
    /// Fonts kept out of training, for honest tests.
    Heldout,
    /// Every font.
    All,
}

/// `mistara synth`.
#[derive(Debug, Args)]
pub struct SynthArgs {
    /// What to make.
    #[command(subcommand)]
    pub what: SynthWhat,
}

/// Options common to every `synth` product.
#[derive(Debug, Clone, Args)]
pub struct SynthCommon {
    /// Output folder (or file, for `book`).
    #[arg(long, value_name = "PATH")]
    pub out: PathBuf,
    /// Fonts to use.
    #[arg(long, value_enum, default_value_t = FontRole::Train)]
    pub fonts: FontRole,
    /// Draw only from this font family of the `--fonts` set (repeat the option for several;
    /// any case, e.g. "Noto Naskh Arabic"). A set of lines in a few faces, trained on beside a
    /// set in all of them, shows the recognizer those faces more often.
    #[arg(long, value_name = "NAME")]
    pub family: Vec<String>,
    /// Random seed: the same seed makes the same files.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Strength of scan degradation, 0 (clean) to 1 (very poor scan).
    #[arg(long, default_value_t = 0.0)]
    pub degrade: f32,
    /// Share of text lines that carry harakat (vowel marks, shadda, tanwin), 0 to 1.
    #[arg(long, value_name = "SHARE", default_value_t = 0.15)]
    pub harakat: f32,
    /// Scan resolution of pages and books, in dots per inch (default: varied per page: 150, 200 or 300).
    #[arg(long, value_name = "N")]
    pub dpi: Option<f32>,
    /// Type variation of lines, 0 to 1: wider or narrower letters, heavier or lighter strokes
    /// and narrower or wider word spaces than the fonts have, so a recognizer trained on them
    /// meets more shapes of type.
    #[arg(long, value_name = "STRENGTH", default_value_t = 0.0)]
    pub vary: f32,
    /// Elastic warp of lines, 0 to 1: letters bent by a smooth random field (deeper or
    /// shallower bowls, a wandering baseline), so a recognizer meets shapes no font has.
    #[arg(long, value_name = "STRENGTH", default_value_t = 0.0)]
    pub warp: f32,
    /// Share of lines drawn as with a broad-nib pen, 0 to 1: strokes across the nib's slanted
    /// edge thick, strokes along it thin, as in hand-lettered and calligraphic print.
    #[arg(long, value_name = "SHARE", default_value_t = 0.0)]
    pub nib: f32,
}

/// `mistara synth lines|pages|book`.
#[derive(Debug, Subcommand)]
pub enum SynthWhat {
    /// Single text lines: DIR/000000.png with DIR/000000.gt.txt beside it.
    Lines {
        /// How many lines.
        #[arg(long)]
        count: usize,
        /// Shared options.
        #[command(flatten)]
        common: SynthCommon,
    },
    /// Whole pages: PNG plus a JSON ground truth per page.
    Pages {
        /// How many pages.
        #[arg(long)]
        count: usize,
        /// Shared options.
        #[command(flatten)]
        common: SynthCommon,
    },
    /// An image-only "scanned" PDF with a JSON ground truth beside it.
    Book {
        /// How many pages.
        #[arg(long)]
        pages: usize,
        /// Shared options.
        #[command(flatten)]
        common: SynthCommon,
    },
}

/// Sequence layers of a fresh network.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum HeadArg {
    /// Bidirectional LSTM.
    Lstm,
    /// 1-D convolutions.
    Conv,
}

/// Order of the characters in training labels.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum LabelOrderArg {
    /// As typed.
    Logical,
    /// As they stand from the line's right edge.
    Reading,
}

/// `mistara train`.
#[derive(Debug, Args)]
pub struct TrainArgs {
    /// Folders of line images with `.gt.txt` transcriptions.
    #[arg(required = true)]
    pub data: Vec<PathBuf>,
    /// Folder of validation lines (repeatable); without it, the last lines of the data are held back.
    #[arg(long, value_name = "DIR")]
    pub valid: Vec<PathBuf>,
    /// Where checkpoints and the final model go.
    #[arg(long, value_name = "DIR", default_value = "runs/train")]
    pub out: PathBuf,
    /// Continue from the last checkpoint in `--out`.
    #[arg(long)]
    pub resume: bool,
    /// Start from this model and adapt it to the given lines.
    #[arg(long, value_name = "MODEL")]
    pub fine_tune: Option<PathBuf>,
    /// Start a fresh network whose convolution blocks are copied from this model (same
    /// channels; --height may differ); its sequence layers start new.
    #[arg(long, value_name = "MODEL", conflicts_with_all = ["resume", "fine_tune"])]
    pub features_from: Option<PathBuf>,
    /// Start from this model with its sequence layers widened to --hidden units: it reads as
    /// the model does at first, and the new units learn from the given lines.
    #[arg(long, value_name = "MODEL", conflicts_with_all = ["resume", "fine_tune", "features_from"])]
    pub widen: Option<PathBuf>,
    /// Random seed.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Stop after this many minutes (checkpoint written first).
    #[arg(long, default_value_t = 60.0)]
    pub minutes: f64,
    /// Stop after this many epochs.
    #[arg(long, default_value_t = 100)]
    pub epochs: usize,
    /// Lines per training step.
    #[arg(long, default_value_t = 16)]
    pub batch: usize,
    /// Adam learning rate (default 1e-3, or 3e-4 with --fine-tune).
    #[arg(long)]
    pub lr: Option<f64>,
    /// Minutes between checkpoints.
    #[arg(long, default_value_t = 5.0)]
    pub checkpoint_minutes: f64,
    /// Worker threads (default: all cores).
    #[arg(long, value_name = "N")]
    pub threads: Option<usize>,
    /// Sequence layers of a fresh network.
    #[arg(long, value_enum, default_value_t = HeadArg::Lstm)]
    pub head: HeadArg,
    /// Line height of a fresh network, in pixels (multiple of 8).
    #[arg(long, default_value_t = 32)]
    pub height: usize,
    /// Width of the sequence layers of a fresh network.
    #[arg(long, default_value_t = 128)]
    pub hidden: usize,
    /// Order to teach the characters of each line in: `reading` (as they stand from the line's
    /// right edge; numbers and Latin turned round) or `logical`. Default: the model's own with
    /// --resume or --fine-tune, `reading` for a new network.
    #[arg(long, value_enum, value_name = "ORDER")]
    pub label_order: Option<LabelOrderArg>,
    /// Channels of the three convolution blocks of a fresh network.
    #[arg(long, value_name = "C1,C2,C3", value_delimiter = ',', default_values_t = [16, 32, 64])]
    pub channels: Vec<usize>,
    /// Copies of the network that each train on a part of every batch, each on a thread of its
    /// own (faster on several cores; the batch-norm statistics are then taken per part). A
    /// run's batches and results depend on this number, not on --threads. Default: the run's
    /// own with --resume, else 2.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u16).range(1..=64))]
    pub replicas: Option<u16>,
    /// Line-image columns per output frame, 2 or 4. With --fine-tune the model's weights are
    /// kept and read at this frame width. Default: the model's own, 2 for a new network.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u8).range(2..=4))]
    pub frame_columns: Option<u8>,
    /// Also train on N lines drawn now over the shelf's training faces (kept in
    /// OUT/rehearsal-lines for --resume), so that a fine-tune keeps reading the faces the model
    /// knew. Four for each line of your own kept their CER within half a point in the measured
    /// case (.runs/ft-alkalami/RUN.md).
    #[arg(long, value_name = "N")]
    pub rehearse: Option<usize>,
    /// No progress display.
    #[arg(short, long)]
    pub quiet: bool,
}

/// `mistara eval`.
#[derive(Debug, Args)]
pub struct EvalArgs {
    /// Folder of line images with `.gt.txt` transcriptions.
    pub dir: PathBuf,
    /// Which model reads the lines.
    #[command(flatten)]
    pub model: ModelChoice,
    /// How many of the worst lines to list.
    #[arg(long, default_value_t = 10)]
    pub worst: usize,
    /// Worker threads (default: all cores).
    #[arg(long, value_name = "N")]
    pub threads: Option<usize>,
}

/// `mistara demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Folder for the demo book and its outputs.
    #[arg(default_value = "mistara-demo")]
    pub dir: PathBuf,
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn clap_definition_is_consistent() {
        Cli::command().debug_assert();
    }
}
