//! Autosave and recovery. While the bench has unsaved changes, a copy of it is written
//! [`AUTOSAVE_IDLE`] after the last edit to the program's data folder (never over the user's file), with a
//! note beside it: the file the bench belongs to, that file's stamp, and when the copy was written. Each
//! running workbench has its own copy (named by its process id). A copy is removed when the bench is
//! saved, when its changes are discarded, when the window closes with nothing unsaved, and once the user
//! has answered the recovery question about it.
//!
//! At the next start, a copy left by a workbench that is no longer running (a crash, a killed process, a
//! power cut) is offered back: Restore opens it as an unsaved bench that keeps its file's path, Discard
//! deletes it. Nothing here runs per frame while nothing changed: an edit records its time, and one
//! delayed repaint writes the copy once the user has been idle.

use crate::Workbench;
use crate::disk::Stamp;
use lumenrail_bench::file::{self, SaveError};
use lumenrail_bench::model::Bench;
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant, SystemTime, UNIX_EPOCH};

/// How long after the last edit the unsaved bench is written to the data folder. Short enough that a crash
/// loses a few seconds of work, long enough that a drag or typing does not write on every step.
pub const AUTOSAVE_IDLE: Duration = Duration::from_secs(5);

/// The environment variable that names the data folder instead of the per-user one (tests, CI, portable
/// installs).
pub const DATA_DIR_VAR: &str = "LUMENRAIL_DATA_DIR";

/// The program's data folder: [`DATA_DIR_VAR`] when set, else the per-user folder where the window keeps
/// its settings (eframe's storage folder, e.g. `~/.local/share/lumenrail` on Linux).
pub fn data_dir() -> Option<PathBuf> {
    std::env::var_os(DATA_DIR_VAR)
        .filter(|v| !v.is_empty())
        .map(PathBuf::from)
        .or_else(|| eframe::storage_dir(crate::app::APP_NAME))
}

/// The note written beside an autosaved bench: what the recovery needs to offer it back.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Note {
    /// The file the bench belongs to (None: it was never saved to a file).
    pub original: Option<PathBuf>,
    /// That file's stamp when it was opened or last saved, so that a restored bench still notices that
    /// the file changed on disk before saving over it.
    pub original_stamp: Option<Stamp>,
    /// When the copy was written, seconds since 1970 (UTC).
    pub saved_unix_s: u64,
    /// The bench's title.
    pub title: String,
    /// The process that wrote it.
    pub pid: u32,
}

/// Autosaved copies in one folder: this process's own, and those left by others.
#[derive(Debug, Clone)]
pub struct Recovery {
    dir: PathBuf,
    pid: u32,
}

/// An autosaved bench found at start, with its note.
#[derive(Debug, Clone, PartialEq)]
pub struct Found {
    /// The bench as it was autosaved.
    pub bench: Bench,
    /// Its note.
    pub note: Note,
    bench_path: PathBuf,
    note_path: PathBuf,
}

impl Recovery {
    /// Copies kept in `data_dir`'s `recovery` folder.
    pub fn in_dir(data_dir: &Path) -> Recovery {
        Recovery { dir: data_dir.join("recovery"), pid: std::process::id() }
    }

    /// The copies of process `pid` in `data_dir` (to read or make the copy another run left: tests, tools).
    pub fn for_process(data_dir: &Path, pid: u32) -> Recovery {
        Recovery { dir: data_dir.join("recovery"), pid }
    }

    /// Copies kept in [`data_dir`], when there is one.
    pub fn from_environment() -> Option<Recovery> {
        data_dir().map(|d| Recovery::in_dir(&d))
    }

    /// The folder the copies are kept in.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    fn paths(&self, pid: u32) -> (PathBuf, PathBuf) {
        (self.dir.join(format!("unsaved-{pid}.bench.ron")), self.dir.join(format!("unsaved-{pid}.json")))
    }

    /// Where this process's copy of the bench goes.
    pub fn bench_path(&self) -> PathBuf {
        self.paths(self.pid).0
    }

    /// Where this process's note goes.
    pub fn note_path(&self) -> PathBuf {
        self.paths(self.pid).1
    }

    /// Writes this process's copy of `bench` and its note, each atomically (the bench first, so that a
    /// note never names a copy that is not there yet). Refuses to write over `original`.
    pub fn write(
        &self,
        bench: &Bench,
        original: Option<&Path>,
        original_stamp: Option<Stamp>,
    ) -> Result<(), SaveError> {
        let (bench_path, note_path) = self.paths(self.pid);
        let err = |source| SaveError { path: bench_path.clone(), source };
        std::fs::create_dir_all(&self.dir).map_err(err)?;
        if let Some(o) = original
            && same_file(o, &bench_path)
        {
            return Err(err(std::io::Error::other("the bench's own file is the autosave copy; not written over")));
        }
        file::write_atomic(&bench_path, file::to_text(bench).as_bytes())?;
        let note = Note {
            original: original.map(Path::to_path_buf),
            original_stamp,
            saved_unix_s: SystemTime::now().duration_since(UNIX_EPOCH).map_or(0, |d| d.as_secs()),
            title: bench.title.clone(),
            pid: self.pid,
        };
        let json = serde_json::to_string_pretty(&note).expect("a note always serialises");
        file::write_atomic(&note_path, json.as_bytes())
    }

    /// Removes this process's copy and note, if any (the note first).
    pub fn clear(&self) {
        let (bench_path, note_path) = self.paths(self.pid);
        let _ = std::fs::remove_file(note_path);
        let _ = std::fs::remove_file(bench_path);
    }

    /// The copies left by workbenches that are no longer running, newest first. A copy whose bench no
    /// longer reads (a file damaged by hand) is left where it is and not offered.
    pub fn leftovers(&self) -> Vec<Found> {
        let Ok(entries) = std::fs::read_dir(&self.dir) else { return Vec::new() };
        let mut found: Vec<Found> = entries
            .filter_map(Result::ok)
            .filter_map(|e| {
                let name = e.file_name().to_string_lossy().into_owned();
                let pid: u32 = name.strip_prefix("unsaved-")?.strip_suffix(".json")?.parse().ok()?;
                (pid != self.pid && !running(pid)).then_some(pid)
            })
            .filter_map(|pid| {
                let (bench_path, note_path) = self.paths(pid);
                let note: Note = serde_json::from_slice(&std::fs::read(&note_path).ok()?).ok()?;
                let bench = file::load(&bench_path).ok()?.bench;
                Some(Found { bench, note, bench_path, note_path })
            })
            .collect();
        found.sort_by_key(|f| std::cmp::Reverse(f.note.saved_unix_s));
        found
    }
}

impl Found {
    /// Deletes the copy and its note.
    pub fn remove(&self) {
        let _ = std::fs::remove_file(&self.note_path);
        let _ = std::fs::remove_file(&self.bench_path);
    }

    /// When it was saved, for a person: "12 minutes ago (2026-03-14 09:26 UTC)".
    pub fn when(&self) -> String {
        let now = SystemTime::now().duration_since(UNIX_EPOCH).map_or(0, |d| d.as_secs());
        let ago = now.saturating_sub(self.note.saved_unix_s);
        let rel = match ago {
            0..60 => "less than a minute ago".to_string(),
            60..120 => "a minute ago".to_string(),
            120..7200 => format!("{} minutes ago", ago / 60),
            7200..172_800 => format!("{} hours ago", ago / 3600),
            _ => format!("{} days ago", ago / 86_400),
        };
        format!("{rel} ({} UTC)", utc_text(self.note.saved_unix_s))
    }
}

/// Whether the two paths name the same file (both must exist to be the same).
fn same_file(a: &Path, b: &Path) -> bool {
    match (std::fs::canonicalize(a), std::fs::canonicalize(b)) {
        (Ok(a), Ok(b)) => a == b,
        _ => false,
    }
}

/// Whether a process `pid` is running. On Linux, from `/proc`; elsewhere it cannot be told cheaply, and a
/// copy is taken to be left over.
fn running(pid: u32) -> bool {
    cfg!(target_os = "linux") && Path::new("/proc").join(pid.to_string()).exists()
}

/// `YYYY-MM-DD HH:MM` in UTC.
fn utc_text(secs: u64) -> String {
    lumenrail_export::date::utc_text(secs, true)
}

/// The recovery question's fixed texts, for the glyph check.
pub const TEXTS: &[&str] = &[
    RECOVERY_TITLE,
    "Restore",
    "Discard the copy",
    "It had not been saved to a file yet.",
    "Restore opens it as an unsaved bench; Discard deletes the copy.",
];

/// The heading of the recovery question.
pub const RECOVERY_TITLE: &str = "Restore an unsaved bench?";

/// The workbench's autosave state: where copies go, how long to wait, and when the last edit was.
#[derive(Debug, Clone)]
pub(crate) struct Autosave {
    pub(crate) recovery: Recovery,
    pub(crate) idle: Duration,
    /// When the bench last changed and has not been written since (None: nothing to do).
    pub(crate) edited_at: Option<Instant>,
    /// Whether this process's copy is on disk.
    pub(crate) written: bool,
}

impl Workbench {
    /// Starts autosaving to `recovery`'s folder, `idle` after the last edit, and looks for copies left by
    /// a workbench that is no longer running: the newest is offered back in the recovery question.
    pub fn start_autosave(&mut self, recovery: Recovery, idle: Duration) {
        self.recovery_offer = recovery.leftovers().into_iter().next();
        self.autosave = Some(Autosave { recovery, idle, edited_at: None, written: false });
    }

    /// The autosaved bench offered back, while the question waits for an answer.
    pub fn recovery_offer(&self) -> Option<&Found> {
        self.recovery_offer.as_ref()
    }

    /// Where this workbench writes its autosave copy (None: autosave is off).
    pub fn autosave_path(&self) -> Option<PathBuf> {
        self.autosave.as_ref().map(|a| a.recovery.bench_path())
    }

    /// Notes an edit: the copy is written once the user has been idle for a while.
    pub(crate) fn autosave_touch(&mut self) {
        if let Some(a) = &mut self.autosave {
            a.edited_at = Some(Instant::now());
        }
    }

    /// Removes this workbench's copy (the bench was saved, or its changes discarded).
    pub(crate) fn autosave_clear(&mut self) {
        if let Some(a) = &mut self.autosave {
            a.edited_at = None;
            if a.written {
                a.recovery.clear();
                a.written = false;
            }
        }
    }

    /// Once a frame: does nothing unless an edit is waiting; writes the copy once the user has been idle
    /// long enough, else asks for one repaint when that time comes.
    pub(crate) fn autosave_step(&mut self, ctx: &egui::Context) {
        let Some(a) = &mut self.autosave else { return };
        let Some(at) = a.edited_at else { return };
        let waited = at.elapsed();
        if waited < a.idle {
            ctx.request_repaint_after(a.idle - waited);
            return;
        }
        self.autosave_now();
    }

    /// Writes the copy now if the bench has unsaved changes (removes it if it has none).
    pub fn autosave_now(&mut self) {
        let dirty = self.dirty();
        let Some(a) = &mut self.autosave else { return };
        a.edited_at = None;
        if !dirty {
            if a.written {
                a.recovery.clear();
                a.written = false;
            }
            return;
        }
        match a.recovery.write(&self.bench, self.path.as_deref(), self.on_disk) {
            Ok(()) => a.written = true,
            Err(e) => self.status = format!("autosave failed: {e}"),
        }
    }

    /// Restores the offered copy: an unsaved bench that keeps its file's path (Save writes that file,
    /// after checking that it did not change on disk since the copy's bench was opened), then deletes the
    /// copy, which is by then this workbench's own.
    pub fn restore_recovered(&mut self) {
        let Some(found) = self.recovery_offer.take() else { return };
        let original = found.note.original.clone();
        let on_file = original.as_deref().and_then(|p| file::load(p).ok()).map(|l| l.bench);
        let mut next = Workbench::new(found.bench.clone(), original.clone());
        next.saved = on_file;
        next.on_disk = found.note.original_stamp;
        self.replace_document(next);
        self.status = match &original {
            Some(p) => format!("restored the unsaved bench of {} (saved {})", p.display(), found.when()),
            None => format!("restored the unsaved bench \"{}\" (saved {})", found.note.title, found.when()),
        };
        self.autosave_now();
        found.remove();
    }

    /// Deletes the offered copy.
    pub fn discard_recovered(&mut self) {
        if let Some(found) = self.recovery_offer.take() {
            found.remove();
            self.status = format!("deleted the unsaved copy of \"{}\"", found.note.title);
        }
    }

    /// The recovery question, when a copy is offered.
    pub(crate) fn recovery_ui(&mut self, ctx: &egui::Context) {
        let Some(found) = &self.recovery_offer else { return };
        let mut answer = None;
        egui::Modal::new(egui::Id::unique("recovery-question")).show(ctx, |ui| {
            ui.set_max_width(460.0);
            ui.heading(RECOVERY_TITLE);
            ui.label(format!(
                "Lumenrail did not close normally. It kept an unsaved copy of \"{}\", saved {}.",
                found.note.title,
                found.when()
            ));
            match &found.note.original {
                Some(p) => ui.label(format!("It belongs to the file {}.", p.display())),
                None => ui.label("It had not been saved to a file yet."),
            };
            ui.label("Restore opens it as an unsaved bench; Discard deletes the copy.");
            ui.horizontal(|ui| {
                if ui.button("Restore").clicked() {
                    answer = Some(true);
                }
                if ui.button("Discard the copy").clicked() {
                    answer = Some(false);
                }
            });
        });
        match answer {
            Some(true) => self.restore_recovered(),
            Some(false) => self.discard_recovered(),
            None => {}
        }
    }
}
