//! One training step and one validation pass. The autodiff device is used only here and in the
//! training loop that calls it.

use burn::module::Module;
use burn::nn::loss::{CTCLossConfig, Reduction};
use burn::optim::{GradientsAccumulator, GradientsParams, ModuleOptimizer};
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

/// One step over `parts` sub-batches of one batch, each on its own thread with its own copy of
/// the network, their gradients summed, then one Adam update. Returns the updated network and
/// the batch loss.
///
/// The burn CPU backend runs a step's many small operations (the LSTM's time steps above all)
/// on one core, so a second core adds little to one step; two replicas each doing half the
/// batch use both. Each part's mean loss is weighted by its share of the batch's lines, so
/// the summed gradient is the gradient of the batch's mean loss as [`train_step`] takes it;
/// only batch-norm differs: each part normalizes over its own lines (statistics of a smaller
/// batch), and the running statistics take the mean of the parts' updates.
pub fn train_step_parts(
    net: LineNet,
    optim: &mut ModuleOptimizer,
    parts: &[StepBatch],
    lr: f64,
    device: &Device,
) -> (LineNet, f32) {
    let lines = |b: &StepBatch| b.pixels.dims()[0];
    let total: usize = parts.iter().map(lines).sum();
    let shares: Vec<(GradientsParams, f32)> = std::thread::scope(|s| {
        let handles: Vec<_> = parts
            .iter()
            .map(|b| {
                let share = lines(b) as f32 / total as f32;
                let net = &net;
                s.spawn(move || replica_grads(net, b, share, device))
            })
            .collect();
        handles
            .into_iter()
            .map(|h| h.join().unwrap_or_else(|e| std::panic::resume_unwind(e)))
            .collect()
    });
    let mut sum = GradientsAccumulator::new();
    let mut loss = 0.0;
    for (grads, value) in shares {
        sum.accumulate(&net, grads);
        loss += value;
    }
    // Batch-norm keeps each thread's update of its running statistics apart until they are
    // synchronized; the threads above are gone, so fold their updates in now (taking the
    // inference view synchronizes them and leaves `net` as it is).
    drop(net.valid());
    (optim.step(lr, net, sum.grads()), loss)
}

/// Gradients of one part's loss, weighted by `share`, on a fork of `net`: the fork's parameters
/// are new leaves of the autodiff graph (same parameter ids), so parts on other threads build
/// graphs of their own instead of one shared, locked graph.
fn replica_grads(
    net: &LineNet,
    batch: &StepBatch,
    share: f32,
    device: &Device,
) -> (GradientsParams, f32) {
    let replica = net.clone().fork(device);
    let loss = ctc_mean_loss(replica.forward(batch.pixels.clone()), batch).mul_scalar(share);
    let value: f32 = loss.clone().into_scalar::<f32>();
    (
        GradientsParams::from_grads(loss.backward(), &replica),
        value,
    )
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

    /// Every float parameter of `net`, in visiting order.
    fn weights(net: &LineNet) -> Vec<f32> {
        struct Collect(Vec<f32>);
        impl burn::module::ModuleVisitor for Collect {
            fn visit_float<const D: usize>(&mut self, p: &burn::module::Param<Tensor<D>>) {
                self.0
                    .extend(p.val().into_data().try_into_vec::<f32>().unwrap());
            }
        }
        let mut c = Collect(Vec::new());
        net.visit(&mut c);
        c.0
    }

    /// Two lines of irregular ink with labels, for a network of height 32 and 2 columns a frame.
    fn toy_batch(device: &Device) -> StepBatch {
        let pixels: Vec<f32> = (0..2 * 32 * 40)
            .map(|i| ((i as f32 * 0.37).sin() * 0.5 + 0.5).powi(3))
            .collect();
        StepBatch {
            pixels: Tensor::from_data(TensorData::new(pixels, [2, 1, 32, 40]), device),
            targets: Tensor::from_data(TensorData::new(vec![1i64, 2, 3, 4, 5, 0], [2, 3]), device),
            input_lengths: Tensor::from_data(TensorData::new(vec![20i64, 20], [2]), device),
            target_lengths: Tensor::from_data(TensorData::new(vec![3i64, 2], [2]), device),
        }
    }

    #[test]
    fn parts_of_a_batch_add_up_to_the_whole_batch_gradient() {
        // Two parts that each hold the whole batch, weighted a half each, must move the weights
        // exactly as one step over the batch does: plain SGD is linear in the gradient, and
        // batch-norm sees the same lines in each part.
        let device = Device::flex().autodiff();
        device.seed(5);
        let cfg = LineNetConfig::new(7)
            .with_hidden(8)
            .with_channels([4, 4, 4])
            .with_frame_columns(2);
        let net = cfg.init(&device);
        let before = weights(&net);
        let sgd = burn::optim::SgdConfig::new();
        let (whole, whole_loss) =
            train_step(net.clone(), &mut sgd.init(), &toy_batch(&device), 0.5);
        let (parts, parts_loss) = train_step_parts(
            net,
            &mut sgd.init(),
            &[toy_batch(&device), toy_batch(&device)],
            0.5,
            &device,
        );
        assert!(
            (whole_loss - parts_loss).abs() < 1e-4 * whole_loss.abs(),
            "{whole_loss} vs {parts_loss}"
        );
        let (w, p) = (weights(&whole), weights(&parts));
        let moved = w
            .iter()
            .zip(&before)
            .filter(|(a, b)| (*a - *b).abs() > 1e-6)
            .count();
        assert!(
            moved > w.len() / 2,
            "the step moved only {moved} of {} weights",
            w.len()
        );
        for (i, (a, b)) in w.iter().zip(&p).enumerate() {
            assert!(
                (a - b).abs() < 1e-5,
                "weight {i}: whole batch {a}, two parts {b}"
            );
        }
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
