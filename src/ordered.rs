//! Parallel work whose results are taken in order: pages are read on every thread of the pool
//! while the calling thread writes them out one after another, with a bounded number in flight.
//!
//! Waiting for a whole window of pages before starting the next leaves threads idle behind the
//! window's slowest page; here a thread that finishes a page starts the next one at once.

use std::collections::BTreeMap;
use std::panic::{catch_unwind, resume_unwind, AssertUnwindSafe};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc;
use std::time::Duration;

/// Run `work(i, &items[i])` for every item on the current rayon pool and pass each result to
/// `take` on the calling thread, in the order of `items`.
///
/// At most `in_flight` items are started and not yet taken, so memory stays bounded however
/// long `items` is. When `take` fails, no further item is started, the items already started
/// finish (their results are dropped), and the error is returned. A panic in `work` is raised
/// again on the calling thread. Called from inside the pool (as under `ThreadPool::install`),
/// the calling thread reads items too while it waits.
pub fn for_each_in_order<T, R, E, W, F>(
    items: &[T],
    in_flight: usize,
    work: W,
    mut take: F,
) -> Result<(), E>
where
    T: Sync,
    R: Send,
    W: Fn(usize, &T) -> R + Sync,
    F: FnMut(usize, R) -> Result<(), E>,
{
    let in_flight = in_flight.max(1);
    let stop = AtomicBool::new(false);
    let (tx, rx) = mpsc::channel::<(usize, Option<std::thread::Result<R>>)>();
    let (work, stop) = (&work, &stop);
    rayon::in_place_scope_fifo(|scope| {
        let mut started = 0;
        let mut held: BTreeMap<usize, std::thread::Result<R>> = BTreeMap::new();
        for next in 0..items.len() {
            while started < items.len() && started < next + in_flight {
                let (i, item, tx) = (started, &items[started], tx.clone());
                scope.spawn_fifo(move |_| {
                    let got = (!stop.load(Ordering::Relaxed))
                        .then(|| catch_unwind(AssertUnwindSafe(|| work(i, item))));
                    // The receiver is gone only after an error, when nothing more is wanted.
                    let _ = tx.send((i, got));
                });
                started += 1;
            }
            let got = loop {
                if let Some(got) = held.remove(&next) {
                    break got;
                }
                let (i, got) = receive(&rx);
                // Every started item sends once, and `stop` is set only on the way out.
                held.insert(i, got.expect("an item skipped before any error"));
            };
            let taken = match got {
                Ok(result) => take(next, result),
                Err(panic) => {
                    stop.store(true, Ordering::Relaxed);
                    resume_unwind(panic)
                }
            };
            if let Err(e) = taken {
                stop.store(true, Ordering::Relaxed);
                return Err(e);
            }
        }
        Ok(())
    })
}

/// The next message, working on the pool's pending items while none has come.
fn receive<M>(rx: &mpsc::Receiver<M>) -> M {
    loop {
        if let Ok(m) = rx.try_recv() {
            return m;
        }
        if rayon::yield_now() != Some(rayon::Yield::Executed) {
            // Nothing to run here: every started item is on another thread (or this thread is
            // outside the pool). Wake now and then in case one of them leaves work to steal.
            if let Ok(m) = rx.recv_timeout(Duration::from_millis(5)) {
                return m;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::atomic::AtomicUsize;

    fn pool(threads: usize) -> rayon::ThreadPool {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
    }

    #[test]
    fn results_come_in_order_with_a_bounded_number_in_flight() {
        let items: Vec<u64> = (0..40).collect();
        for threads in [1, 2, 4] {
            let running = AtomicUsize::new(0);
            let taken_so_far = AtomicUsize::new(0);
            let most_ahead = AtomicUsize::new(0);
            let mut seen = Vec::new();
            let r: Result<(), ()> = pool(threads).install(|| {
                for_each_in_order(
                    &items,
                    3,
                    |i, &x| {
                        running.fetch_add(1, Ordering::SeqCst);
                        // Later items finish first, so the order must be restored.
                        std::thread::sleep(Duration::from_micros(300 * (40 - x)));
                        let ahead = i - taken_so_far.load(Ordering::SeqCst);
                        most_ahead.fetch_max(ahead, Ordering::SeqCst);
                        running.fetch_sub(1, Ordering::SeqCst);
                        x * x
                    },
                    |i, sq| {
                        seen.push((i, sq));
                        taken_so_far.store(i + 1, Ordering::SeqCst);
                        Ok(())
                    },
                )
            });
            assert!(r.is_ok());
            let want: Vec<(usize, u64)> = items.iter().map(|&x| (x as usize, x * x)).collect();
            assert_eq!(seen, want, "threads {threads}");
            assert!(most_ahead.load(Ordering::SeqCst) < 3, "threads {threads}");
        }
    }

    #[test]
    fn works_outside_a_pool_too() {
        let items = ["a", "bb", "ccc"];
        let mut lens = Vec::new();
        let r: Result<(), ()> = for_each_in_order(
            &items,
            2,
            |_, s| s.len(),
            |_, n| {
                lens.push(n);
                Ok(())
            },
        );
        assert!(r.is_ok());
        assert_eq!(lens, [1, 2, 3]);
    }

    #[test]
    fn an_error_stops_further_items() {
        let items: Vec<usize> = (0..100).collect();
        let done = AtomicUsize::new(0);
        let r = pool(2).install(|| {
            for_each_in_order(
                &items,
                4,
                |_, &x| {
                    done.fetch_add(1, Ordering::SeqCst);
                    x
                },
                |i, _| {
                    if i == 5 {
                        Err(format!("page {i}"))
                    } else {
                        Ok(())
                    }
                },
            )
        });
        assert_eq!(r, Err("page 5".to_string()));
        // Items 0..=5 were taken; at most `in_flight` more were started.
        assert!(
            done.load(Ordering::SeqCst) <= 6 + 4,
            "{}",
            done.load(Ordering::SeqCst)
        );
    }

    #[test]
    fn a_panic_in_work_reaches_the_caller() {
        let items = [1, 2, 3];
        let got = catch_unwind(|| {
            pool(2).install(|| {
                for_each_in_order(
                    &items,
                    2,
                    |_, &x| {
                        assert!(x != 2, "item two");
                        x
                    },
                    |_, _| Ok::<(), ()>(()),
                )
            })
        });
        assert!(got.is_err());
    }
}
