//! `LineNet`: the line recognizer's architecture and nothing else.
//!
//! A small convolutional front end turns a height-normalized, flipped line image into a sequence
//! of column features; a sequence head (bidirectional LSTM, or a stack of 1-D convolutions) reads
//! the sequence; a linear layer gives per-frame class scores, returned as log-probabilities for
//! CTC (Graves et al. 2006, "Connectionist Temporal Classification"). Convolution + recurrent
//! layers + CTC is the common line-recognition layout (Shi, Bai & Yao 2015, "An End-to-End
//! Trainable Neural Network for Image-based Sequence Recognition").

use burn::config::Config;
use burn::module::Module;
use burn::nn::conv::{Conv1d, Conv1dConfig, Conv2d, Conv2dConfig};
use burn::nn::pool::{MaxPool2d, MaxPool2dConfig};
use burn::nn::{
    BatchNorm, BatchNormConfig, BiLstm, BiLstmConfig, Linear, LinearConfig, PaddingConfig1d,
    PaddingConfig2d,
};
use burn::tensor::activation::{log_softmax, relu};
use burn::tensor::{Device, Tensor};

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
            Some(p) => p.forward(x),
            None => x,
        };
        relu(self.norm.forward(x))
    }
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
    /// this network's height and channels (the caller checks; see [`LineNet::front_end_matches`]).
    pub fn with_fresh_head(self, config: &LineNetConfig, device: &Device) -> LineNet {
        let fresh = config.init(device);
        LineNet {
            blocks: self.blocks,
            ..fresh
        }
    }

    /// Whether `with_fresh_head` may combine this network's front end with `config`.
    pub fn front_end_matches(own: &LineNetConfig, config: &LineNetConfig) -> bool {
        own.height == config.height && own.channels == config.channels
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
