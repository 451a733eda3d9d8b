//! Training and fine-tuning the line recognizer: the loop, validation, checkpoints and resume.
//!
//! A run lives in one folder: `last.mstr` + `optim.bin` + `state.json` are the checkpoint (model,
//! Adam state, where the run is), `best.mstr` the model with the lowest validation CER so far,
//! `history.tsv` the validation curve. The batch order depends only on the seed and the epoch,
//! so a resumed run continues with exactly the batches it would have seen.

pub mod data;
pub mod rehearsal;
pub mod step;

use std::path::{Path, PathBuf};
use std::time::Instant;

use burn::grad_clipping::GradientClippingConfig;
use burn::module::Module;
use burn::optim::{AdamConfig, ModuleOptimizer};
use burn::tensor::{Bytes, Device};
use serde::{Deserialize, Serialize};

use self::data::{epoch_batches, load_line_set, read_gray, LineSample};
use crate::eval::align::char_edits;
use crate::recognize::charset::Charset;
use crate::recognize::model_file::{self, LabelOrder, ModelHeader};
use crate::recognize::net::{HeadKind, LineNet, LineNetConfig};
use crate::recognize::{batch::make_batch, decode_batch};
use crate::{Error, Result};

/// Everything a training run needs to know.
#[derive(Debug, Clone)]
pub struct TrainConfig {
    /// Folders of line images + `.gt.txt`.
    pub data: Vec<PathBuf>,
    /// Validation folders; when empty, the last `valid_lines` training lines are held back.
    pub valid: Vec<PathBuf>,
    /// Lines held back for validation when no validation folder is given.
    pub valid_lines: usize,
    /// Run folder.
    pub out: PathBuf,
    /// Continue the run in `out`.
    pub resume: bool,
    /// Start from this model file.
    pub fine_tune: Option<PathBuf>,
    /// Start a fresh network (shape `net`) whose convolution blocks are copied from this model.
    pub features_from: Option<PathBuf>,
    /// Start from this model with its LSTM head widened to `net.hidden` units
    /// ([`LineNet::widened`]: it reads as the model does until the new units learn).
    pub widen: Option<PathBuf>,
    /// Seed for weights and batch order.
    pub seed: u64,
    /// Stop after this many minutes of training (this session).
    pub minutes: f64,
    /// Stop after this many epochs.
    pub epochs: usize,
    /// Lines per step.
    pub batch_lines: usize,
    /// Adam learning rate.
    pub lr: f64,
    /// Save a checkpoint at least this often, in minutes.
    pub checkpoint_minutes: f64,
    /// Network sizes for a fresh model.
    pub net: LineNetConfig,
    /// Widest line, in network columns.
    pub max_width_cols: usize,
    /// Order to teach labels in; `None`: the model's own when resuming or fine-tuning, reading
    /// order for a new network.
    pub label_order: Option<LabelOrder>,
    /// Input columns per output frame when fine-tuning (the weights fit either); `None`: the
    /// model's own. A fresh network takes `net.frame_columns`.
    pub frame_columns: Option<usize>,
    /// Copies of the network that each take a part of every batch, on threads of their own
    /// (see [`step::train_step_parts`]); `None`: the run's own when resuming, else 2.
    pub replicas: Option<usize>,
}

impl TrainConfig {
    /// Defaults for the given data and run folder.
    pub fn new(data: Vec<PathBuf>, out: PathBuf) -> TrainConfig {
        TrainConfig {
            data,
            valid: Vec::new(),
            valid_lines: 300,
            out,
            resume: false,
            fine_tune: None,
            features_from: None,
            widen: None,
            seed: 1,
            minutes: 60.0,
            epochs: 100,
            batch_lines: 16,
            lr: 1e-3,
            checkpoint_minutes: 5.0,
            net: LineNetConfig::new(Charset::new().classes()).with_head(HeadKind::Lstm),
            max_width_cols: 1600,
            label_order: None,
            frame_columns: None,
            replicas: None,
        }
    }
}

/// Where a run stands; saved with every checkpoint.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct RunState {
    /// Current epoch (0-based).
    pub epoch: usize,
    /// Batches of the current epoch already done.
    pub batch_in_epoch: usize,
    /// Steps done in all sessions.
    pub steps: u64,
    /// Lines trained on in all sessions.
    pub lines_seen: u64,
    /// Seconds of training in all sessions.
    pub train_s: f64,
    /// Lowest validation CER so far.
    pub best_cer: Option<f64>,
    /// Network copies each batch is split over (runs saved before there was a choice: 1).
    #[serde(default = "one")]
    pub replicas: usize,
}

fn one() -> usize {
    1
}

/// What the loop reports to its caller.
#[derive(Debug, Clone)]
pub enum TrainEvent {
    /// Data read.
    Loaded {
        /// Training lines.
        train: usize,
        /// Validation lines.
        valid: usize,
        /// Lines skipped (alphabet or too short).
        skipped: usize,
    },
    /// One step done.
    Step {
        /// Epoch.
        epoch: usize,
        /// Batch within the epoch.
        batch: usize,
        /// Batches per epoch.
        batches: usize,
        /// Smoothed loss.
        loss: f32,
        /// Lines per second in this session.
        lines_per_s: f64,
        /// Seconds left of the time budget.
        left_s: f64,
    },
    /// Validation done.
    Validated {
        /// Epoch.
        epoch: usize,
        /// Character error rate, 0..1.
        cer: f64,
    },
    /// Checkpoint written.
    Saved(PathBuf),
}

/// Train until the time budget or the epoch count is used up. Returns the final state.
pub fn train(cfg: &TrainConfig, mut report: impl FnMut(&TrainEvent)) -> Result<RunState> {
    std::fs::create_dir_all(&cfg.out).map_err(|e| Error::io(&cfg.out, e))?;
    let device = Device::flex().autodiff();
    device.seed(cfg.seed);
    let (mut net, net_cfg, mut optim, mut state, order) = start(cfg, &device)?;
    state.replicas = match (cfg.replicas, cfg.resume) {
        (Some(n), _) => n,
        (None, true) => state.replicas,
        (None, false) => 2,
    }
    .max(1);
    let (train_set, valid_set) = split_data(cfg, &net_cfg, order)?;
    report(&TrainEvent::Loaded {
        train: train_set.lines.len(),
        valid: valid_set.len(),
        skipped: train_set.skipped_alphabet + train_set.skipped_short,
    });
    if train_set.lines.is_empty() {
        return Err(Error::Usage(
            "no usable training lines (image + .gt.txt pairs) in the given folders".into(),
        ));
    }
    let header = |note: String| ModelHeader {
        config: net_cfg.clone(),
        alphabet: model_file::alphabet(),
        note,
        label_order: order,
    };
    let t0 = Instant::now();
    let mut last_save = Instant::now();
    let (mut smooth, mut session_lines) = (f32::NAN, 0u64);
    let budget_s = cfg.minutes * 60.0;
    'run: while state.epoch < cfg.epochs {
        let batches = epoch_batches(&train_set.lines, cfg.batch_lines, cfg.seed, state.epoch);
        while state.batch_in_epoch < batches.len() {
            let idx = &batches[state.batch_in_epoch];
            let samples: Vec<&LineSample> = idx.iter().map(|&i| &train_set.lines[i]).collect();
            let images = samples
                .iter()
                .map(|s| read_gray(&s.image))
                .collect::<Result<Vec<_>>>()?;
            let t_step = Instant::now();
            let (n2, loss) = if state.replicas == 1 {
                let b = step::step_batch(&samples, &images, &net_cfg, cfg.max_width_cols, &device);
                step::train_step(net, &mut optim, &b, cfg.lr)
            } else {
                let per_part = samples.len().div_ceil(state.replicas);
                let parts: Vec<step::StepBatch> = samples
                    .chunks(per_part)
                    .zip(images.chunks(per_part))
                    .map(|(s, i)| step::step_batch(s, i, &net_cfg, cfg.max_width_cols, &device))
                    .collect();
                step::train_step_parts(net, &mut optim, &parts, cfg.lr, &device)
            };
            net = n2;
            state.train_s += t_step.elapsed().as_secs_f64();
            state.steps += 1;
            state.batch_in_epoch += 1;
            state.lines_seen += samples.len() as u64;
            session_lines += samples.len() as u64;
            smooth = if smooth.is_nan() {
                loss
            } else {
                0.98 * smooth + 0.02 * loss
            };
            let el = t0.elapsed().as_secs_f64();
            report(&TrainEvent::Step {
                epoch: state.epoch,
                batch: state.batch_in_epoch,
                batches: batches.len(),
                loss: smooth,
                lines_per_s: session_lines as f64 / el,
                left_s: budget_s - el,
            });
            if last_save.elapsed().as_secs_f64() >= cfg.checkpoint_minutes * 60.0 || el >= budget_s
            {
                validate_and_save(
                    cfg,
                    &net,
                    &optim,
                    &mut state,
                    &valid_set,
                    &net_cfg,
                    &header,
                    &mut report,
                )?;
                last_save = Instant::now();
            }
            if el >= budget_s {
                break 'run;
            }
        }
        state.epoch += 1;
        state.batch_in_epoch = 0;
        validate_and_save(
            cfg,
            &net,
            &optim,
            &mut state,
            &valid_set,
            &net_cfg,
            &header,
            &mut report,
        )?;
        last_save = Instant::now();
    }
    Ok(state)
}

type Started = (
    crate::recognize::net::LineNet,
    LineNetConfig,
    ModuleOptimizer,
    RunState,
    LabelOrder,
);

/// Fresh, fine-tuned or resumed network, optimizer and state.
fn start(cfg: &TrainConfig, device: &Device) -> Result<Started> {
    let optim = AdamConfig::new()
        .with_grad_clipping(Some(GradientClippingConfig::Norm(5.0)))
        .init();
    if cfg.resume {
        let bytes = read(&cfg.out.join("last.mstr"))?;
        let (header, net) = model_file::load_net(&bytes, device)?;
        let optim_bytes = read(&cfg.out.join("optim.bin"))?;
        let optim = optim
            .from_bytes(Bytes::from_bytes_vec(optim_bytes))
            .map_err(|e| {
                Error::Model(format!(
                    "{}: optimizer state is damaged: {e}",
                    cfg.out.join("optim.bin").display()
                ))
            })?;
        let state_path = cfg.out.join("state.json");
        let state: RunState = serde_json::from_slice(&read(&state_path)?)
            .map_err(|e| Error::input(&state_path, format!("run state is damaged: {e}")))?;
        if cfg.label_order.is_some_and(|o| o != header.label_order) {
            return Err(Error::Usage(format!(
                "the run in {} was taught labels in {:?} order; to change the order, start a \
                 new run with --fine-tune {}",
                cfg.out.display(),
                header.label_order,
                cfg.out.join("last.mstr").display()
            )));
        }
        if cfg
            .frame_columns
            .is_some_and(|f| f != header.config.frame_columns)
        {
            return Err(Error::Usage(format!(
                "the run in {} reads {} columns per frame; to change it, start a new run with \
                 --fine-tune {}",
                cfg.out.display(),
                header.config.frame_columns,
                cfg.out.join("last.mstr").display()
            )));
        }
        return Ok((net, header.config, optim, state, header.label_order));
    }
    if let Some(from) = &cfg.fine_tune {
        let (header, net) = model_file::load_net(&read(from)?, device)?;
        let order = cfg.label_order.unwrap_or(header.label_order);
        let mut config = header.config;
        let net = match cfg.frame_columns {
            Some(f) if f != config.frame_columns => {
                config.frame_columns = f;
                net.with_frame_columns(&config)
            }
            _ => net,
        };
        return Ok((net, config, optim, RunState::default(), order));
    }
    if let Some(from) = &cfg.widen {
        let (header, net) = model_file::load_net(&read(from)?, device)?;
        let wide = header.config.clone().with_hidden(cfg.net.hidden);
        if !LineNet::widening_fits(&header.config, &wide) {
            return Err(Error::Usage(format!(
                "--widen {}: its head ({:?}, {} units) cannot grow to {} units; give --hidden \
                 above {} for a model with an LSTM head",
                from.display(),
                header.config.head,
                header.config.hidden,
                cfg.net.hidden,
                header.config.hidden
            )));
        }
        let net = net.widened(&header.config, &wide, device);
        let order = cfg.label_order.unwrap_or(header.label_order);
        return Ok((net, wide, optim, RunState::default(), order));
    }
    let order = cfg.label_order.unwrap_or(LabelOrder::Reading);
    if let Some(from) = &cfg.features_from {
        let (header, net) = model_file::load_net(&read(from)?, device)?;
        if !LineNet::front_end_matches(&header.config, &cfg.net) {
            return Err(Error::Model(format!(
                "{}: its convolution blocks (channels {:?}) do not fit the new network \
                 (channels {:?}); give --channels {}",
                from.display(),
                header.config.channels,
                cfg.net.channels,
                header.config.channels.map(|c| c.to_string()).join(",")
            )));
        }
        let net = net.with_fresh_head(&cfg.net, device);
        return Ok((net, cfg.net.clone(), optim, RunState::default(), order));
    }
    Ok((
        cfg.net.init(device),
        cfg.net.clone(),
        optim,
        RunState::default(),
        order,
    ))
}

fn read(path: &Path) -> Result<Vec<u8>> {
    std::fs::read(path).map_err(|e| Error::io(path, e))
}

/// Training lines and validation lines.
fn split_data(
    cfg: &TrainConfig,
    net: &LineNetConfig,
    order: LabelOrder,
) -> Result<(data::LineSet, Vec<LineSample>)> {
    let mut train_set = load_line_set(&cfg.data, net, cfg.max_width_cols, order)?;
    let valid = if cfg.valid.is_empty() {
        let keep = train_set
            .lines
            .len()
            .saturating_sub(cfg.valid_lines.min(train_set.lines.len() / 5));
        train_set.lines.split_off(keep)
    } else {
        load_line_set(&cfg.valid, net, cfg.max_width_cols, order)?.lines
    };
    Ok((train_set, valid))
}

#[allow(clippy::too_many_arguments)]
fn validate_and_save(
    cfg: &TrainConfig,
    net: &crate::recognize::net::LineNet,
    optim: &ModuleOptimizer,
    state: &mut RunState,
    valid: &[LineSample],
    net_cfg: &LineNetConfig,
    header: &dyn Fn(String) -> ModelHeader,
    report: &mut impl FnMut(&TrainEvent),
) -> Result<()> {
    let cer = validation_cer(net, valid, net_cfg, cfg.max_width_cols)?;
    report(&TrainEvent::Validated {
        epoch: state.epoch,
        cer,
    });
    let note = format!(
        "steps {}, lines seen {}, training {:.2} h, validation CER {:.4}",
        state.steps,
        state.lines_seen,
        state.train_s / 3600.0,
        cer
    );
    let model = model_file::model_bytes(net, &header(note))?;
    if state.best_cer.is_none_or(|b| cer < b) {
        state.best_cer = Some(cer);
        write_atomic(&cfg.out.join("best.mstr"), &model)?;
    }
    write_atomic(&cfg.out.join("last.mstr"), &model)?;
    let ob = optim
        .into_bytes()
        .map_err(|e| Error::Model(format!("cannot encode optimizer state: {e}")))?;
    write_atomic(&cfg.out.join("optim.bin"), &ob)?;
    write_atomic(
        &cfg.out.join("state.json"),
        &serde_json::to_vec_pretty(state).expect("plain struct"),
    )?;
    append_history(&cfg.out, state, cer)?;
    report(&TrainEvent::Saved(cfg.out.join("last.mstr")));
    Ok(())
}

fn append_history(out: &Path, s: &RunState, cer: f64) -> Result<()> {
    use std::io::Write;
    let path = out.join("history.tsv");
    let new = !path.exists();
    let mut f = std::fs::OpenOptions::new()
        .create(true)
        .append(true)
        .open(&path)
        .map_err(|e| Error::io(&path, e))?;
    if new {
        writeln!(f, "epoch\tsteps\tlines_seen\ttrain_h\tvalid_cer")
            .map_err(|e| Error::io(&path, e))?;
    }
    writeln!(
        f,
        "{}\t{}\t{}\t{:.3}\t{:.5}",
        s.epoch,
        s.steps,
        s.lines_seen,
        s.train_s / 3600.0,
        cer
    )
    .map_err(|e| Error::io(&path, e))
}

fn write_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    let tmp = path.with_extension("tmp");
    std::fs::write(&tmp, bytes).map_err(|e| Error::io(&tmp, e))?;
    std::fs::rename(&tmp, path).map_err(|e| Error::io(path, e))
}

/// Greedy-decoded CER of `net` over `lines` (total edits / total truth characters).
pub fn validation_cer(
    net: &crate::recognize::net::LineNet,
    lines: &[LineSample],
    config: &LineNetConfig,
    max_width: usize,
) -> Result<f64> {
    let eval_net = net.valid();
    let cs = Charset::new();
    let device = Device::flex();
    let (mut edits, mut total) = (0usize, 0usize);
    for chunk in lines.chunks(32) {
        let images = chunk
            .iter()
            .map(|s| read_gray(&s.image))
            .collect::<Result<Vec<_>>>()?;
        let refs: Vec<&image::GrayImage> = images.iter().collect();
        let lb = make_batch(&refs, config.height, max_width, &device);
        let decoded = decode_batch(
            eval_net.forward(lb.pixels),
            &lb.widths,
            config.frame_columns,
            0,
            None,
        );
        for (s, syms) in chunk.iter().zip(decoded) {
            let got = cs.decode(&syms.iter().map(|x| x.class).collect::<Vec<_>>());
            let truth = cs.decode(&s.label);
            edits += char_edits(&truth, &got);
            total += truth.chars().count();
        }
    }
    Ok(if total == 0 {
        0.0
    } else {
        edits as f64 / total as f64
    })
}

#[cfg(test)]
mod tests {
    use super::data::load_line_set;
    use super::*;
    use burn::optim::AdamConfig;
    use burn::tensor::Tensor;

    /// A fresh model of `config` (labels in logical order) written to `dir/small.mstr`.
    fn write_model(dir: &Path, config: &LineNetConfig, device: &Device) -> PathBuf {
        let header = ModelHeader {
            config: config.clone(),
            alphabet: model_file::alphabet(),
            note: String::new(),
            label_order: LabelOrder::Logical,
        };
        let file = dir.join("small.mstr");
        std::fs::write(
            &file,
            model_file::model_bytes(&config.init(device), &header).unwrap(),
        )
        .unwrap();
        file
    }

    #[test]
    fn features_from_a_model_of_other_channels_is_a_clear_error() {
        let dir = tempfile::tempdir().unwrap();
        let small = LineNetConfig::new(Charset::new().classes())
            .with_channels([4, 4, 4])
            .with_hidden(8)
            .with_frame_columns(4);
        let device = Device::flex();
        let file = write_model(dir.path(), &small, &device);
        let mut cfg = TrainConfig::new(Vec::new(), dir.path().join("run"));
        cfg.features_from = Some(file.clone());
        cfg.net = small.clone().with_channels([4, 4, 8]);
        let err = start(&cfg, &device)
            .err()
            .expect("8 channels over blocks made for 4");
        assert!(err.to_string().contains("do not fit"), "{err}");
        assert!(err.to_string().contains("--channels 4,4,4"), "{err}");
        // The same channels are accepted and keep the new head's config.
        cfg.net = small.clone().with_head(HeadKind::Conv);
        let (_, net_cfg, _, state, order) = start(&cfg, &device).unwrap();
        assert_eq!(net_cfg.head, HeadKind::Conv);
        assert_eq!(state.lines_seen, 0);
        // A new head learns labels in reading order unless told otherwise.
        assert_eq!(order, LabelOrder::Reading);
        cfg.label_order = Some(LabelOrder::Logical);
        assert_eq!(start(&cfg, &device).unwrap().4, LabelOrder::Logical);
        // Taller lines at another frame width: the blocks are the model's, the frames the new
        // network's (a 40-column line at 2 columns per frame gives 20 frames).
        cfg.net = small.clone().with_height(48).with_frame_columns(2);
        let (net, net_cfg, ..) = start(&cfg, &device).unwrap();
        assert_eq!((net_cfg.height, net_cfg.frame_columns), (48, 2));
        let out = net.forward(Tensor::<4>::zeros([1, 1, 48, 40], &device));
        assert_eq!(out.dims(), [20, 1, Charset::new().classes()]);
    }

    #[test]
    fn widening_takes_the_models_shape_and_refuses_to_shrink() {
        let dir = tempfile::tempdir().unwrap();
        let small = LineNetConfig::new(Charset::new().classes())
            .with_channels([4, 4, 4])
            .with_hidden(8)
            .with_frame_columns(2);
        let device = Device::flex();
        let file = write_model(dir.path(), &small, &device);
        let mut cfg = TrainConfig::new(Vec::new(), dir.path().join("run"));
        cfg.widen = Some(file);
        // The run's own network sizes (channels 16-32-64 by default) give way to the model's.
        cfg.net = cfg.net.with_hidden(12);
        let (_, net_cfg, _, _, order) = start(&cfg, &device).unwrap();
        assert_eq!(
            (net_cfg.hidden, net_cfg.channels, net_cfg.frame_columns),
            (12, [4, 4, 4], 2)
        );
        assert_eq!(order, LabelOrder::Logical);
        cfg.net = cfg.net.with_hidden(8);
        let err = start(&cfg, &device).err().expect("8 units are not wider");
        assert!(err.to_string().contains("cannot grow"), "{err}");
    }

    /// A tiny network must be able to learn four real lines by heart (CER 0): the loss, the
    /// gradients, the optimizer step and the decoding fit together. Common practice, no source.
    #[test]
    #[ignore = "takes 1–2 minutes on two shared cores; run with `cargo test -- --ignored`"]
    fn tiny_network_overfits_four_lines() {
        let dir = PathBuf::from(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/data/lines/heldout"
        ));
        let cfg = LineNetConfig::new(Charset::new().classes())
            .with_channels([8, 16, 32])
            .with_hidden(64)
            .with_head(HeadKind::Conv);
        let set = load_line_set(&[dir], &cfg, 800, LabelOrder::Logical).unwrap();
        let lines: Vec<LineSample> = set
            .lines
            .into_iter()
            .filter(|l| l.label.len() <= 12)
            .take(4)
            .collect();
        assert_eq!(lines.len(), 4);
        let device = Device::flex().autodiff();
        device.seed(3);
        let mut net = cfg.init(&device);
        let mut optim = AdamConfig::new().init();
        let samples: Vec<&LineSample> = lines.iter().collect();
        let images: Vec<_> = lines.iter().map(|l| read_gray(&l.image).unwrap()).collect();
        let batch = step::step_batch(&samples, &images, &cfg, 800, &device);
        let mut cer = 1.0;
        for step_no in 0..600 {
            net = step::train_step(net, &mut optim, &batch, 3e-3).0;
            if step_no % 50 == 49 {
                cer = validation_cer(&net, &lines, &cfg, 800).unwrap();
                if cer == 0.0 {
                    break;
                }
            }
        }
        assert_eq!(cer, 0.0, "four lines not learned by heart");
    }
}
