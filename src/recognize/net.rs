//! `LineNet`: the line recognizer's architecture and nothing else.
//!
//! A small convolutional front end turns a height-normalized, flipped line image into a sequence
//! of column features; a sequence head (bidirectional LSTM, or a stack of 1-D convolutions) reads
//! the sequence; a linear layer gives per-frame class scores, returned as log-probabilities for
//! CTC (Graves et al. 2006, "Connectionist Temporal Classification"). Convolution + recurrent
//! layers + CTC is the common line-recognition layout (Shi, Bai & Yao 2015, "An End-to-End
//! Trainable Neural Network for Image-based Sequence Recognition").

use burn::config::Config;
use burn::module::{Module, Param};
use burn::nn::conv::{Conv1d, Conv1dConfig, Conv2d, Conv2dConfig};
use burn::nn::pool::{MaxPool2d, MaxPool2dConfig};
use burn::nn::{
    BatchNorm, BatchNormConfig, BiLstm, BiLstmConfig, GateController, Linear, LinearConfig, Lstm,
    PaddingConfig1d, PaddingConfig2d,
};
use burn::tensor::activation::{log_softmax, relu};
use burn::tensor::{Device, Tensor, TensorData};

/// Which sequence layers read the column features.
#[derive(Config, Debug, Copy, PartialEq, Eq)]
pub enum HeadKind {
    /// One bidirectional LSTM layer.
    Lstm,
    /// Three 1-D convolutions (kernel 5) over the frame sequence.
    Conv,
}

/// Sizes of a [`LineNet`].
#[derive(Config, Debug)]
pub struct LineNetConfig {
    /// Output classes, CTC blank included.
    pub classes: usize,
    /// Line height the image is scaled to, in pixels (a multiple of 8).
    #[config(default = 32)]
    pub height: usize,
    /// Channels of the three convolution blocks.
    #[config(default = "[16, 32, 64]")]
    pub channels: [usize; 3],
    /// Width of the sequence head (per direction for the LSTM).
    #[config(default = 128)]
    pub hidden: usize,
    /// Sequence head.
    #[config(default = "HeadKind::Lstm")]
    pub head: HeadKind,
    /// Input columns per output frame: 4 (the first models) or 2. CTC needs a frame per symbol
    /// and a blank between equal neighbours, so a narrow face with harakat needs 2.
    #[config(default = 4)]
    pub frame_columns: usize,
}

/// Conv → max-pool → batch-norm → ReLU. Pooling first keeps batch-norm cheap.
#[derive(Module, Debug)]
pub struct ConvBlock {
    conv: Conv2d,
    pool: Option<MaxPool2d>,
    norm: BatchNorm,
}

impl ConvBlock {
    fn new(
        c_in: usize,
        c_out: usize,
        stride: usize,
        pool: Option<[usize; 2]>,
        device: &Device,
    ) -> Self {
        let conv = Conv2dConfig::new([c_in, c_out], [3, 3])
            .with_stride([stride, stride])
            .with_padding(PaddingConfig2d::Explicit(1, 1, 1, 1))
            .init(device);
        let pool = pool.map(|k| MaxPool2dConfig::new(k).init());
        ConvBlock {
            conv,
            pool,
            norm: BatchNormConfig::new(c_out).init(device),
        }
    }

    fn forward(&self, x: Tensor<4>) -> Tensor<4> {
        let x = self.conv.forward(x);
        let x = match &self.pool {
            Some(p) => max_pool(p, x),
            None => x,
        };
        relu(self.norm.forward(x))
    }
}

/// What `p` computes, by pairs where it can: for a 2 × 1 or 2 × 2 window stepped by its own size,
/// without padding, the element-wise maximum of the rows (and then the columns) taken two by
/// two. The backend's general pooling also records where each maximum was; measured with
/// `examples/recognize_bench`, that took a seventh of the time of reading a line.
fn max_pool(p: &MaxPool2d, x: Tensor<4>) -> Tensor<4> {
    let [b, c, h, w] = x.dims();
    let plain = p.stride == p.kernel_size
        && p.dilation == [1, 1]
        && !p.ceil_mode
        && matches!(p.padding, PaddingConfig2d::Valid);
    let kw = p.kernel_size[1];
    if !plain || p.kernel_size[0] != 2 || !matches!(kw, 1 | 2) || h < 2 || w < kw {
        return p.forward(x);
    }
    let (h2, w2) = (h / 2, w / kw);
    let x = if h % 2 == 1 {
        x.narrow(2, 0, 2 * h2)
    } else {
        x
    };
    let x = if w % kw == 1 {
        x.narrow(3, 0, kw * w2)
    } else {
        x
    };
    let width = kw * w2;
    // Row 2i and row 2i + 1 side by side in one row of the reshaped tensor.
    let pairs = x.reshape([b, c, h2, 2 * width]);
    let rows = pairs
        .clone()
        .narrow(3, 0, width)
        .max_pair(pairs.narrow(3, width, width));
    if kw == 1 {
        return rows;
    }
    let cols = rows.reshape([b, c, h2 * w2, 2]);
    cols.clone()
        .narrow(3, 0, 1)
        .max_pair(cols.narrow(3, 1, 1))
        .reshape([b, c, h2, w2])
}

/// The line recognizer network. Build it with [`LineNetConfig::init`].
#[derive(Module, Debug)]
pub struct LineNet {
    blocks: Vec<ConvBlock>,
    lstm: Option<BiLstm>,
    convs: Vec<Conv1d>,
    out: Linear,
}

impl LineNetConfig {
    /// A network with fresh weights.
    pub fn init(&self, device: &Device) -> LineNet {
        assert!(
            self.height % 8 == 0 && self.height >= 16,
            "height must be a multiple of 8, at least 16"
        );
        assert!(
            matches!(self.frame_columns, 2 | 4),
            "frame_columns must be 2 or 4"
        );
        let [c1, c2, c3] = self.channels;
        let blocks = vec![
            ConvBlock::new(1, c1, 2, None, device), // stride 2: [b, c1, h/2, w/2]
            ConvBlock::new(c1, c2, 1, Some(self.second_pool()), device), // [b, c2, h/4, w/f]
            ConvBlock::new(c2, c3, 1, Some([2, 1]), device), // [b, c3, h/8, w/f]
        ];
        let features = c3 * self.height / 8;
        let (lstm, convs, d_out) = match self.head {
            HeadKind::Lstm => (
                Some(BiLstmConfig::new(features, self.hidden, true).init(device)),
                vec![],
                2 * self.hidden,
            ),
            HeadKind::Conv => {
                let convs = (0..3)
                    .map(|i| {
                        let c_in = if i == 0 { features } else { self.hidden };
                        Conv1dConfig::new(c_in, self.hidden, 5)
                            .with_padding(PaddingConfig1d::Explicit(2, 2))
                            .init(device)
                    })
                    .collect();
                (None, convs, self.hidden)
            }
        };
        LineNet {
            blocks,
            lstm,
            convs,
            out: LinearConfig::new(d_out, self.classes).init(device),
        }
    }
}

impl LineNetConfig {
    /// Pooling of the second block: halves the width again only for 4 columns per frame.
    fn second_pool(&self) -> [usize; 2] {
        [2, self.frame_columns / 2]
    }

    /// Output frames for a line `width_cols` columns wide after batching.
    pub fn frames_for_width(&self, width_cols: usize) -> usize {
        width_cols.div_ceil(self.frame_columns)
    }
}

impl LineNet {
    /// The same weights reading at `config`'s frame width (the pooling has no weights, so a
    /// model trained at 4 columns per frame can be fine-tuned at 2). `config` must differ from
    /// this network's own only in `frame_columns`.
    pub fn with_frame_columns(mut self, config: &LineNetConfig) -> LineNet {
        self.blocks[1].pool = Some(MaxPool2dConfig::new(config.second_pool()).init());
        self
    }

    /// A network built from `config` whose convolution blocks are this network's, already trained:
    /// a new sequence head learns on top of features that already read ink. `config` must have
    /// this network's channels (the caller checks; see [`LineNet::front_end_matches`]); its line
    /// height and frame width may differ, as 3 × 3 kernels and pooling do not depend on them.
    pub fn with_fresh_head(self, config: &LineNetConfig, device: &Device) -> LineNet {
        let fresh = config.init(device);
        LineNet {
            blocks: self.with_frame_columns(config).blocks,
            ..fresh
        }
    }

    /// This network with a wider LSTM head (`config.hidden` units per direction instead of
    /// `own.hidden`) that computes exactly what this one does: the old units keep their weights,
    /// the new units start with fresh incoming weights but nothing reads them yet (their weights
    /// into the old units' gates and into the output layer are zero), so training starts from
    /// this network's accuracy with room to grow. Function-preserving widening, as in Chen,
    /// Goodfellow & Shlens 2016, "Net2Net: Accelerating Learning via Knowledge Transfer" (there
    /// the new units copy old ones; here they start silent). `config` must differ from `own`
    /// only in a larger `hidden` (the caller checks; see [`LineNet::widening_fits`]).
    pub fn widened(self, own: &LineNetConfig, config: &LineNetConfig, device: &Device) -> LineNet {
        let (old_h, new_h) = (own.hidden, config.hidden);
        let fresh = config.init(device);
        let (Some(old), Some(new)) = (self.lstm, fresh.lstm) else {
            unreachable!("widening_fits checks that both heads are LSTMs")
        };
        let lstm = BiLstm {
            forward: widen_lstm(old.forward, new.forward, old_h),
            reverse: widen_lstm(old.reverse, new.reverse, old_h),
            ..new
        };
        // Output rows: forward units first, then reverse units (BiLstm concatenates them); the
        // new units' rows are zero.
        let row = |r: usize| if r < old_h { r } else { r - old_h + new_h };
        let out = Linear {
            weight: paste(fresh.out.weight, &self.out.weight, row, |c| c, |_, _| true),
            bias: self.out.bias,
        };
        LineNet {
            blocks: self.blocks,
            lstm: Some(lstm),
            convs: Vec::new(),
            out,
        }
    }

    /// Whether [`LineNet::widened`] can take a network of `own` to `config`.
    pub fn widening_fits(own: &LineNetConfig, config: &LineNetConfig) -> bool {
        own.head == HeadKind::Lstm
            && config.head == HeadKind::Lstm
            && config.hidden > own.hidden
            && LineNetConfig {
                hidden: own.hidden,
                ..config.clone()
            }
            .to_string()
                == own.to_string()
    }

    /// Whether `with_fresh_head` may combine this network's front end with `config`: the same
    /// channels. The height may differ (a front end trained on 32-pixel lines starts a network
    /// that reads taller ones: more rows of the same features reach the new head).
    pub fn front_end_matches(own: &LineNetConfig, config: &LineNetConfig) -> bool {
        own.channels == config.channels
    }

    /// Per-frame log-probabilities.
    ///
    /// # Shapes
    /// - `pixels`: `[batch, 1, height, width]`, ink values, columns in reading order
    /// - output: `[width / frame_columns, batch, classes]` (time first, as CTC wants it)
    pub fn forward(&self, pixels: Tensor<4>) -> Tensor<3> {
        let mut x = pixels;
        for b in &self.blocks {
            x = b.forward(x);
        }
        let [batch, c, h, t] = x.dims(); // [b, c3, h/8, w/frame_columns]
        let seq = x.reshape([batch, c * h, t]); // [b, features, t]
        let seq = match &self.lstm {
            Some(lstm) => lstm.forward(seq.swap_dims(1, 2), None).0, // [b, t, 2·hidden]
            None => {
                let mut y = seq;
                for conv in &self.convs {
                    y = relu(conv.forward(y)); // [b, hidden, t]
                }
                y.swap_dims(1, 2) // [b, t, hidden]
            }
        };
        let logits = self.out.forward(seq); // [b, t, classes]
        log_softmax(logits, 2).swap_dims(0, 1) // [t, b, classes]
    }
}

/// One direction of a widened LSTM: each gate's old weights pasted into the fresh, wider gate.
fn widen_lstm(old: Lstm, fresh: Lstm, old_h: usize) -> Lstm {
    let gate = |o: GateController, f: GateController| -> GateController {
        GateController {
            // [d_input, hidden]: the old units' columns; new units keep their fresh inputs.
            input_transform: Linear {
                weight: paste(
                    f.input_transform.weight,
                    &o.input_transform.weight,
                    |r| r,
                    |c| c,
                    |_, _| false,
                ),
                bias: paste_bias(f.input_transform.bias, &o.input_transform.bias),
            },
            // [hidden, hidden]: old block kept; a new unit's state feeds no old gate.
            hidden_transform: Linear {
                weight: paste(
                    f.hidden_transform.weight,
                    &o.hidden_transform.weight,
                    |r| r,
                    |c| c,
                    |r, c| r >= old_h && c < old_h,
                ),
                bias: paste_bias(f.hidden_transform.bias, &o.hidden_transform.bias),
            },
        }
    };
    Lstm {
        input_gate: gate(old.input_gate, fresh.input_gate),
        forget_gate: match (old.forget_gate, fresh.forget_gate) {
            (Some(o), Some(f)) => Some(gate(o, f)),
            (_, f) => f,
        },
        output_gate: gate(old.output_gate, fresh.output_gate),
        cell_gate: gate(old.cell_gate, fresh.cell_gate),
        ..fresh
    }
}

/// `fresh` with `old` pasted in: `old[r][c]` goes to `fresh[row(r)][col(c)]`; cells of `fresh`
/// for which `zero(r, c)` holds and that no old cell landed on become 0. A new parameter.
fn paste(
    fresh: Param<Tensor<2>>,
    old: &Param<Tensor<2>>,
    row: impl Fn(usize) -> usize,
    col: impl Fn(usize) -> usize,
    zero: impl Fn(usize, usize) -> bool,
) -> Param<Tensor<2>> {
    let (fresh, old) = (fresh.val(), old.val());
    let ([rows, cols], [old_rows, old_cols]) = (fresh.dims(), old.dims());
    let device = fresh.device();
    let old = floats(old);
    let mut v = floats(fresh);
    for r in 0..rows {
        for c in 0..cols {
            if zero(r, c) {
                v[r * cols + c] = 0.0;
            }
        }
    }
    for r in 0..old_rows {
        for c in 0..old_cols {
            v[row(r) * cols + col(c)] = old[r * old_cols + c];
        }
    }
    Param::from_tensor(Tensor::from_data(TensorData::new(v, [rows, cols]), &device))
}

/// A fresh bias with the old units' values in its first places. A new parameter.
fn paste_bias(
    fresh: Option<Param<Tensor<1>>>,
    old: &Option<Param<Tensor<1>>>,
) -> Option<Param<Tensor<1>>> {
    let (Some(fresh), Some(old)) = (fresh, old) else {
        return None;
    };
    let (fresh, old) = (fresh.val(), floats(old.val()));
    let device = fresh.device();
    let mut v = floats(fresh);
    v[..old.len()].copy_from_slice(&old);
    let n = v.len();
    Some(Param::from_tensor(Tensor::from_data(
        TensorData::new(v, [n]),
        &device,
    )))
}

fn floats<const D: usize>(t: Tensor<D>) -> Vec<f32> {
    t.into_data().try_into_vec::<f32>().expect("f32 weights")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn output_is_time_first_with_a_quarter_of_the_columns() {
        let device = Device::flex();
        for head in [HeadKind::Lstm, HeadKind::Conv] {
            let net = LineNetConfig::new(7)
                .with_hidden(8)
                .with_channels([4, 4, 4])
                .with_head(head)
                .init(&device);
            let out = net.forward(Tensor::<4>::zeros([2, 1, 32, 40], &device));
            assert_eq!(out.dims(), [10, 2, 7]);
            // log-probabilities: each frame's probabilities sum to 1.
            let sums: Vec<f32> = out
                .exp()
                .sum_dim(2)
                .into_data()
                .try_into_vec::<f32>()
                .unwrap();
            assert!(sums.iter().all(|s| (s - 1.0).abs() < 1e-4), "{sums:?}");
        }
    }

    #[test]
    fn fresh_head_keeps_the_front_end_weights() {
        let device = Device::flex();
        let small = LineNetConfig::new(7)
            .with_hidden(8)
            .with_channels([4, 4, 4])
            .with_head(HeadKind::Conv);
        let old = small.init(&device);
        let x = Tensor::<4>::ones([1, 1, 32, 16], &device);
        let features = |n: &LineNet| -> Vec<f32> {
            let mut y = x.clone();
            for b in &n.blocks {
                y = b.forward(y);
            }
            y.into_data().try_into_vec::<f32>().unwrap()
        };
        let before = features(&old);
        let lstm = small.clone().with_head(HeadKind::Lstm);
        let new = old.with_fresh_head(&lstm, &device);
        assert_eq!(features(&new), before);
        assert!(new.lstm.is_some() && new.convs.is_empty());
        assert_eq!(new.forward(x.clone()).dims(), [4, 1, 7]);
        // A fresh network of the same shape has other front-end weights: the check can fail.
        assert_ne!(features(&small.init(&device)), before);
    }

    #[test]
    fn a_widened_head_reads_as_the_narrow_one_and_its_new_units_learn() {
        let device = Device::flex().autodiff();
        device.seed(11);
        let narrow = LineNetConfig::new(7)
            .with_hidden(6)
            .with_channels([4, 4, 4])
            .with_frame_columns(2);
        let wide = narrow.clone().with_hidden(10);
        assert!(LineNet::widening_fits(&narrow, &wide));
        assert!(!LineNet::widening_fits(&wide, &narrow));
        assert!(!LineNet::widening_fits(
            &narrow,
            &wide.clone().with_channels([4, 4, 8])
        ));
        let x: Vec<f32> = (0..2 * 32 * 24)
            .map(|i| ((i as f32 * 0.61).sin() + 1.0) / 2.0)
            .collect();
        let x = Tensor::<4>::from_data(TensorData::new(x, [2, 1, 32, 24]), &device);
        let old = narrow.init(&device);
        let read = |n: &LineNet| floats(n.valid().forward(x.clone().inner()));
        let before = read(&old);
        let widened = old.widened(&narrow, &wide, &device);
        assert_eq!(widened.lstm.as_ref().unwrap().d_hidden, 10);
        let after = read(&widened);
        assert_eq!(before.len(), after.len());
        for (a, b) in before.iter().zip(&after) {
            assert!((a - b).abs() < 1e-5, "narrow {a}, widened {b}");
        }
        // A fresh network of the wide shape reads otherwise: the check can fail.
        let other = read(&wide.init(&device));
        assert!(before.iter().zip(&other).any(|(a, b)| (a - b).abs() > 1e-3));
        // One gradient step reaches the new units' output rows (rows 6..10 and 16..20).
        let loss = widened.forward(x.clone()).sum();
        let grads = loss.backward();
        let g = floats(
            widened
                .out
                .weight
                .val()
                .grad(&grads)
                .expect("output gradient"),
        );
        let classes = 7;
        let new_rows: f32 = (6..10)
            .chain(16..20)
            .flat_map(|r| g[r * classes..(r + 1) * classes].to_vec())
            .map(f32::abs)
            .sum();
        assert!(new_rows > 0.0, "the new units get no gradient");
    }

    #[test]
    fn pooling_by_pairs_equals_the_general_pooling() {
        // Reference: burn's own `MaxPool2d` (crates.io, burn-nn 0.22), on odd and even sizes.
        let device = Device::flex();
        for (h, w) in [(6, 10), (7, 9), (2, 2), (5, 1)] {
            let v: Vec<f32> = (0..2 * 3 * h * w)
                .map(|i| ((i as f32 * 1.37).sin() * 10.0).round())
                .collect();
            let x = Tensor::<4>::from_data(TensorData::new(v, [2, 3, h, w]), &device);
            for k in [[2, 1], [2, 2]] {
                if w < k[1] {
                    continue;
                }
                let p = MaxPool2dConfig::new(k).init();
                let want = floats(p.forward(x.clone()));
                let got = max_pool(&p, x.clone());
                assert_eq!(got.dims(), p.forward(x.clone()).dims(), "{h}×{w}, {k:?}");
                assert_eq!(floats(got), want, "{h}×{w}, {k:?}");
            }
        }
    }

    #[test]
    fn two_columns_a_frame_doubles_the_frames_with_the_same_weights() {
        let device = Device::flex();
        let four = LineNetConfig::new(7)
            .with_hidden(8)
            .with_channels([4, 4, 4]);
        let two = four.clone().with_frame_columns(2);
        assert_eq!(
            (four.frames_for_width(41), two.frames_for_width(41)),
            (11, 21)
        );
        let net = four.init(&device);
        let x = Tensor::<4>::ones([1, 1, 32, 40], &device);
        assert_eq!(net.forward(x.clone()).dims(), [10, 1, 7]);
        let params = net.num_params();
        let net = net.with_frame_columns(&two);
        assert_eq!(net.forward(x).dims(), [20, 1, 7]);
        assert_eq!(net.num_params(), params);
        assert_eq!(two.init(&device).num_params(), params);
    }
}
