//! The outputs written beside the PDF from the finished pages of a run — ALTO files and the
//! confidence report — driven by one observer call per page, committed only when the run succeeds.

use std::path::PathBuf;

use super::alto::AltoDir;
use super::report::ReportBuilder;
use crate::error::Result;
use crate::pipeline::PageDone;

/// Where the page-by-page outputs of a run go (each optional).
#[derive(Debug, Clone, Default)]
pub struct SidecarPaths {
    /// `--alto DIR`: one ALTO file per page.
    pub alto: Option<PathBuf>,
    /// `--report FILE.json`: the confidence report.
    pub report: Option<PathBuf>,
}

/// The page-by-page outputs being written.
pub struct Sidecars {
    alto: Option<AltoDir>,
    report: Option<(ReportBuilder, PathBuf)>,
    inputs: Vec<PathBuf>,
}

impl Sidecars {
    /// Prepare the outputs in `paths`; `from_transcript` when the text is laid from a transcript.
    pub fn create(paths: &SidecarPaths, inputs: &[PathBuf], from_transcript: bool) -> Result<Self> {
        if let Some(r) = &paths.report {
            super::refuse_overwriting_input(r, inputs)?;
        }
        let source = match inputs {
            [one] => one.file_name().map(|n| n.to_string_lossy().into_owned()),
            _ => None,
        };
        let alto = paths
            .alto
            .as_deref()
            .map(|d| AltoDir::create(d, inputs, source, from_transcript))
            .transpose()?;
        Ok(Sidecars {
            alto,
            report: paths
                .report
                .clone()
                .map(|p| (ReportBuilder::new(from_transcript), p)),
            inputs: inputs.to_vec(),
        })
    }

    /// Take one finished page.
    pub fn page(&mut self, p: &PageDone) -> Result<()> {
        if let Some(a) = &mut self.alto {
            a.page(p)?;
        }
        if let Some((r, _)) = &mut self.report {
            r.page(p);
        }
        Ok(())
    }

    /// Move the ALTO files into place and write the report.
    pub fn commit(self) -> Result<()> {
        if let Some(a) = self.alto {
            a.commit()?;
        }
        if let Some((r, path)) = self.report {
            r.write(&path, &self.inputs)?;
        }
        Ok(())
    }
}
