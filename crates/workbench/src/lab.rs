//! Lab sheets from the workbench: the class's PDF and its answer key, for the lab and paper chosen in the
//! File menu's prompt, from the bench's one evaluation (the same sheet `lumenrail lab-sheet` writes).

use crate::Workbench;
use lumenrail_bench::lab::{Lab, LabSheet};
use lumenrail_export::lab::{Paper, answers_pdf, sheet_pdf};
use std::path::{Path, PathBuf};

/// Where the answer key goes beside the class's sheet: `NAME-answers.pdf`.
pub(crate) fn answers_path(sheet: &Path) -> PathBuf {
    let stem = sheet.file_stem().and_then(|s| s.to_str()).unwrap_or("lab-sheet");
    sheet.with_file_name(format!("{stem}-answers.pdf"))
}

impl Workbench {
    /// Writes the lab sheet of `lab` to `path` and its answer key beside it; the status line says what
    /// was written or why not. Returns whether both were written.
    pub(crate) fn write_lab_sheet(&mut self, lab: Lab, paper: Paper, path: &Path) -> bool {
        self.lab_choice = (lab, paper);
        let sheet = match LabSheet::of(&self.evaluation, lab) {
            Ok(s) => s,
            Err(e) => {
                self.status = format!("no lab sheet: {e}");
                return false;
            }
        };
        let key = answers_path(path);
        let files = [
            (path.to_path_buf(), sheet_pdf(&self.evaluation, &sheet, paper)),
            (key.clone(), answers_pdf(&sheet, paper)),
        ];
        for (out, bytes) in files {
            let written = bytes
                .map_err(|e| e.to_string())
                .and_then(|b| lumenrail_bench::file::write_atomic(&out, &b).map_err(|e| e.to_string()));
            if let Err(e) = written {
                self.status = e;
                return false;
            }
        }
        self.status = format!("wrote the lab sheet to {} and its answer key to {}", path.display(), key.display());
        true
    }
}
