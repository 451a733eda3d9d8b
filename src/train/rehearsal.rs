//! Lines over the shelf's training faces, drawn to train on beside a collection's own lines when
//! a model is fine-tuned, so that it keeps reading the faces it knew. Measured
//! (`.runs/ft-alkalami`): the built-in model fine-tuned on 400 lines of a face it had never seen
//! read that face at 3.9 % CER (18.8 % before) but the training families at 5.98 % (2.09 %);
//! with 1 600 of these lines beside the 400, 5.1 % and 2.47 %.

use std::fs;
use std::path::{Path, PathBuf};

use crate::error::{Error, Result};
use crate::synth::corpus::CorpusConfig;
use crate::synth::shelf::FontSet;
use crate::synth::{self, SynthConfig};

/// Folder under a run's `--out` that holds its rehearsal lines.
pub const DIR: &str = "rehearsal-lines";

/// File in that folder saying what was drawn, so a resumed run keeps the same lines.
const STAMP: &str = "drawn.txt";

/// How the lines are drawn: as the built-in model's own training lines (light scan damage, some
/// harakat, varied and bent type), over all training faces.
fn recipe(seed: u64) -> SynthConfig {
    SynthConfig {
        fonts: FontSet::Train,
        seed,
        degrade: 0.3,
        corpus: CorpusConfig {
            harakat_share: 0.2,
            ..CorpusConfig::default()
        },
        vary: 0.8,
        warp: 0.7,
        ..SynthConfig::default()
    }
}

/// `count` rehearsal lines drawn with `seed` in `out`'s [`DIR`]; lines an earlier start of the
/// run drew with the same count and seed are kept. A folder of that name that this function did
/// not write is left alone, with an error.
pub fn rehearsal_lines(
    out: &Path,
    count: usize,
    seed: u64,
    tick: &(dyn Fn() + Sync),
) -> Result<PathBuf> {
    let dir = out.join(DIR);
    let stamp = dir.join(STAMP);
    let drawn = format!("{count} lines, seed {seed}\n");
    match fs::read_to_string(&stamp) {
        Ok(s) if s == drawn => return Ok(dir),
        // Drawn before with other numbers: drawn anew, without the old lines.
        Ok(_) => fs::remove_dir_all(&dir).map_err(|e| Error::io(&dir, e))?,
        Err(_) if dir.exists() => {
            return Err(Error::Usage(format!(
                "{}: exists and was not drawn by --rehearse; move it away or give another --out",
                dir.display()
            )))
        }
        Err(_) => {}
    }
    synth::write_lines(&recipe(seed), &dir, count, tick)?;
    synth::write_file(&stamp, drawn.as_bytes())?;
    Ok(dir)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lines_in(dir: &Path) -> usize {
        fs::read_dir(dir)
            .unwrap()
            .filter(|e| {
                e.as_ref()
                    .unwrap()
                    .path()
                    .to_string_lossy()
                    .ends_with(".gt.txt")
            })
            .count()
    }

    #[test]
    fn lines_are_drawn_over_training_faces_kept_on_resume_and_redrawn_when_asked_otherwise() {
        let out = tempfile::tempdir().unwrap();
        let dir = rehearsal_lines(out.path(), 3, 7, &|| {}).unwrap();
        assert_eq!(lines_in(&dir), 3);
        let manifest = fs::read_to_string(dir.join("manifest.tsv")).unwrap();
        let roles: Vec<&str> = manifest
            .lines()
            .skip(1)
            .map(|l| l.split('\t').nth(4).unwrap())
            .collect();
        assert_eq!(roles, ["train"; 3]);
        // The same count and seed: the lines already drawn are kept, not drawn again.
        let first = dir.join("000000.gt.txt");
        fs::write(&first, "kept\n").unwrap();
        rehearsal_lines(out.path(), 3, 7, &|| {}).unwrap();
        assert_eq!(fs::read_to_string(&first).unwrap(), "kept\n");
        // Fewer lines: drawn anew, none of the old ones left.
        rehearsal_lines(out.path(), 2, 7, &|| {}).unwrap();
        assert_eq!(lines_in(&dir), 2);
        assert_ne!(fs::read_to_string(&first).unwrap(), "kept\n");
    }

    #[test]
    fn a_folder_of_that_name_not_drawn_here_is_left_alone() {
        let out = tempfile::tempdir().unwrap();
        let dir = out.path().join(DIR);
        fs::create_dir(&dir).unwrap();
        fs::write(dir.join("mine.txt"), "a user's file").unwrap();
        let err = rehearsal_lines(out.path(), 2, 7, &|| {}).unwrap_err();
        assert!(err.to_string().contains("--rehearse"), "{err}");
        assert!(dir.join("mine.txt").exists());
        assert_eq!(lines_in(&dir), 0);
    }
}
