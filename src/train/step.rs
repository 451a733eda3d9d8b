//! One training step and one validation pass. The autodiff device is used only here and in the
//! training loop that calls it.

use burn::module::Module;
use burn::nn::loss::{CTCLossConfig, Reduction};
use burn::optim::{GradientsParams, ModuleOptimizer};
use burn::tensor::{Device, Int, Tensor, TensorData};
use image::GrayImage;

use super::data::LineSample;
use crate::recognize::batch::make_batch;
use crate::recognize::net::{LineNet, LineNetConfig};

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
    net: &LineNetConfig,
    max_width: usize,
    device: &Device,
) -> StepBatch {
    let refs: Vec<&GrayImage> = images.iter().collect();
    let lb = make_batch(&refs, net.height, max_width, device);
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
        .map(|&w| net.frames_for_width(w) as i64)
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::recognize::decode::collapse;
    use burn::tensor::activation::log_softmax;

    /// Softmax of fixed, irregular logits (no randomness, so the test is repeatable).
    fn logits(t: usize, c: usize, shift: f64) -> Vec<f64> {
        (0..t * c)
            .map(|i| (i as f64 * 1.7 + shift).sin() * 2.0)
            .collect()
    }

    fn log_softmax_rows(x: &[f64], c: usize) -> Vec<f64> {
        x.chunks(c)
            .flat_map(|r| {
                let m = r.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
                let z = r.iter().map(|v| (v - m).exp()).sum::<f64>().ln() + m;
                r.iter().map(move |v| v - z).collect::<Vec<_>>()
            })
            .collect()
    }

    /// −log Σ over every frame path π with B(π) = label of Π_t y(π_t) — the definition of the
    /// CTC loss (Graves et al. 2006, eq. 2–3), by enumerating all c^t paths.
    fn brute_force_ctc(x: &[f64], t: usize, c: usize, label: &[usize]) -> f64 {
        let lp = log_softmax_rows(x, c);
        let mut total = 0.0;
        for code in 0..c.pow(t as u32) {
            let path: Vec<usize> = (0..t).map(|i| code / c.pow(i as u32) % c).collect();
            if collapse(&path) == label {
                total += path
                    .iter()
                    .enumerate()
                    .map(|(i, &k)| lp[i * c + k])
                    .sum::<f64>()
                    .exp();
            }
        }
        -total.ln()
    }

    /// burn's CTC loss (no reduction) of one line and its gradient w.r.t. the logits.
    fn burn_ctc(x: &[f64], t: usize, c: usize, label: &[usize]) -> (f64, Vec<f64>) {
        let device = Device::flex().autodiff();
        let data: Vec<f32> = x.iter().map(|&v| v as f32).collect();
        let logits =
            Tensor::<3>::from_data(TensorData::new(data, [t, 1, c]), &device).require_grad();
        let targets: Vec<i64> = label.iter().map(|&k| k as i64).collect();
        let loss = CTCLossConfig::new().init().forward(
            log_softmax(logits.clone(), 2),
            Tensor::from_data(TensorData::new(targets, [1, label.len()]), &device),
            Tensor::from_data(TensorData::new(vec![t as i64], [1]), &device),
            Tensor::from_data(TensorData::new(vec![label.len() as i64], [1]), &device),
        );
        let value = loss.clone().into_scalar::<f32>() as f64;
        let grads = loss.sum().backward();
        let g = logits.grad(&grads).expect("gradient");
        let g: Vec<f32> = g.into_data().try_into_vec::<f32>().unwrap();
        (value, g.into_iter().map(f64::from).collect())
    }

    #[test]
    fn ctc_loss_equals_brute_force_sum_over_alignments() {
        // Three classes (blank + 2 symbols), up to five frames (Graves et al. 2006 definition).
        let cases: &[(usize, &[usize])] = &[
            (3, &[1]),
            (4, &[1, 2]),
            (5, &[1, 1]),
            (5, &[2, 1, 2]),
            (2, &[2]),
        ];
        for (n, &(t, label)) in cases.iter().enumerate() {
            let x = logits(t, 3, n as f64);
            let want = brute_force_ctc(&x, t, 3, label);
            let (got, _) = burn_ctc(&x, t, 3, label);
            assert!(
                (got - want).abs() < 1e-4 * want.abs().max(1.0),
                "T={t} label={label:?}: burn {got}, brute force {want}"
            );
        }
    }

    #[test]
    fn ctc_gradient_matches_finite_differences() {
        let (t, c, label) = (5, 3, [1usize, 2, 1]);
        let x = logits(t, c, 0.3);
        let (_, grad) = burn_ctc(&x, t, c, &label);
        let h = 1e-5;
        for i in 0..x.len() {
            let (mut up, mut down) = (x.clone(), x.clone());
            up[i] += h;
            down[i] -= h;
            let fd = (brute_force_ctc(&up, t, c, &label) - brute_force_ctc(&down, t, c, &label))
                / (2.0 * h);
            assert!(
                (grad[i] - fd).abs() < 2e-3,
                "d loss / d x[{i}]: burn {}, finite difference {fd}",
                grad[i]
            );
        }
    }
}
