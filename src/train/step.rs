//! One training step and one validation pass. The autodiff device is used only here and in the
//! training loop that calls it.

use burn::module::Module;
use burn::nn::loss::{CTCLossConfig, Reduction};
use burn::optim::{GradientsParams, ModuleOptimizer};
use burn::tensor::{Device, Int, Tensor, TensorData};
use image::GrayImage;

use super::data::LineSample;
use crate::recognize::batch::make_batch;
use crate::recognize::net::{frames_for_width, LineNet};

/// A batch ready for the loss.
#[derive(Debug)]
pub struct StepBatch {
    /// `[batch, 1, height, width]`.
    pub pixels: Tensor<4>,
    /// `[batch, longest label]`, padded with 0.
    pub targets: Tensor<2, Int>,
    /// Frames of each line, `[batch]`.
    pub input_lengths: Tensor<1, Int>,
    /// Label length of each line, `[batch]`.
    pub target_lengths: Tensor<1, Int>,
}

/// Images and labels → tensors on `device`.
pub fn step_batch(
    samples: &[&LineSample],
    images: &[GrayImage],
    height: usize,
    max_width: usize,
    device: &Device,
) -> StepBatch {
    let refs: Vec<&GrayImage> = images.iter().collect();
    let lb = make_batch(&refs, height, max_width, device);
    let n = samples.len();
    let longest = samples
        .iter()
        .map(|s| s.label.len())
        .max()
        .unwrap_or(1)
        .max(1);
    let mut targets = vec![0i64; n * longest];
    for (b, s) in samples.iter().enumerate() {
        for (j, &k) in s.label.iter().enumerate() {
            targets[b * longest + j] = k as i64;
        }
    }
    let frames: Vec<i64> = lb
        .widths
        .iter()
        .map(|&w| frames_for_width(w) as i64)
        .collect();
    let lens: Vec<i64> = samples.iter().map(|s| s.label.len() as i64).collect();
    StepBatch {
        pixels: lb.pixels,
        targets: Tensor::from_data(TensorData::new(targets, [n, longest]), device),
        input_lengths: Tensor::from_data(TensorData::new(frames, [n]), device),
        target_lengths: Tensor::from_data(TensorData::new(lens, [n]), device),
    }
}

/// Mean CTC loss of a batch (each line's loss divided by its label length, then averaged, as
/// PyTorch's `CTCLoss(reduction="mean")` does).
///
/// # Shapes
/// `log_probs`: `[frames, batch, classes]` → `[1]`.
pub fn ctc_mean_loss(log_probs: Tensor<3>, b: &StepBatch) -> Tensor<1> {
    CTCLossConfig::new()
        .with_zero_infinity(true)
        .init()
        .forward_with_reduction(
            log_probs,
            b.targets.clone(),
            b.input_lengths.clone(),
            b.target_lengths.clone(),
            Reduction::Mean,
        )
}

/// Forward, loss, backward, Adam update. Returns the updated network and the batch loss.
pub fn train_step(
    net: LineNet,
    optim: &mut ModuleOptimizer,
    batch: &StepBatch,
    lr: f64,
) -> (LineNet, f32) {
    let loss = ctc_mean_loss(net.forward(batch.pixels.clone()), batch);
    let value: f32 = loss.clone().into_scalar::<f32>();
    let grads = GradientsParams::from_grads(loss.backward(), &net);
    (optim.step(lr, net, grads), value)
}

/// The network in evaluation mode (batch-norm running statistics, no autodiff).
pub fn for_inference(net: &LineNet) -> LineNet {
    net.valid()
}
