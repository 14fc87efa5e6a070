//! Reading and writing bench files (RON, format 1), with every error placed at a file, line and column.
//!
//! Loading reads bytes, checks size, skips a UTF-8 byte-order mark (lines and columns count from after
//! it), checks UTF-8, refuses a newer `format` before anything else is read, parses with unknown fields
//! refused, then validates. Saving writes the parts in rail order to a temporary file beside the target
//! (made with the `tempfile` crate), flushes it to disk, gives it the old file's permissions, renames it
//! over the target and flushes the folder: a failed save leaves the old file intact and no temporary
//! file behind. A save through a symbolic link writes the file the link points to.

use crate::model::{Bench, FORMAT};
use crate::validate::{Finding, Severity, validate};
use std::fmt;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

/// The largest bench file accepted, bytes (a bench with hundreds of parts is a few tens of kB).
pub const MAX_FILE_BYTES: u64 = 4 * 1024 * 1024;

/// A place in a file: 1-based line and column.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Place {
    /// Line, from 1.
    pub line: usize,
    /// Column (characters), from 1.
    pub col: usize,
}

/// One problem with a bench file, placed.
#[derive(Debug, Clone, PartialEq)]
pub struct Diagnostic {
    /// The file as named by the user.
    pub file: String,
    /// Where in it.
    pub place: Place,
    /// Error or warning.
    pub severity: Severity,
    /// What is wrong.
    pub message: String,
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let kind = if self.severity == Severity::Warning { "warning: " } else { "" };
        write!(f, "{}:{}:{}: {kind}{}", self.file, self.place.line, self.place.col, self.message)
    }
}

/// Why a bench could not be loaded: one or more placed errors.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadError {
    /// The errors (and any warnings found beside them).
    pub diagnostics: Vec<Diagnostic>,
}

impl fmt::Display for LoadError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (k, d) in self.diagnostics.iter().enumerate() {
            if k > 0 {
                writeln!(f)?;
            }
            write!(f, "{d}")?;
        }
        Ok(())
    }
}

impl std::error::Error for LoadError {}

/// A loaded, valid bench with the warnings validation found.
#[derive(Debug, Clone, PartialEq)]
pub struct Loaded {
    /// The bench.
    pub bench: Bench,
    /// Warnings, placed.
    pub warnings: Vec<Diagnostic>,
}

/// One error placed at the start of the file.
pub(crate) fn at_start(file: &str, message: String) -> LoadError {
    LoadError {
        diagnostics: vec![Diagnostic {
            file: file.into(),
            place: Place { line: 1, col: 1 },
            severity: Severity::Error,
            message,
        }],
    }
}

/// Reads and validates the bench file at `path`.
pub fn load(path: &Path) -> Result<Loaded, LoadError> {
    let (name, text) = read_text(path, "bench")?;
    parse_text(&name, &text)
}

/// Reads the text of a file of ours (a `noun` file: "bench", "drawer"): checks its size, skips a byte-order
/// mark and checks UTF-8. Returns the file's name for messages and its text.
pub(crate) fn read_text(path: &Path, noun: &str) -> Result<(String, String), LoadError> {
    let name = path.display().to_string();
    let meta =
        std::fs::metadata(path).map_err(|e| at_start(&name, format!("cannot read the file: {}", io_words(&e))))?;
    if meta.is_dir() {
        return Err(at_start(&name, format!("this is a directory, not a {noun} file")));
    }
    if meta.len() > MAX_FILE_BYTES {
        return Err(at_start(
            &name,
            format!(
                "the file is {} bytes; a {noun} file is at most {} bytes, so this is not one",
                meta.len(),
                MAX_FILE_BYTES
            ),
        ));
    }
    let mut bytes =
        std::fs::read(path).map_err(|e| at_start(&name, format!("cannot read the file: {}", io_words(&e))))?;
    // Skipped before the UTF-8 check, so that a UTF-8 error on line 1 is placed in the visible text too.
    if bytes.starts_with(BOM.as_bytes()) {
        bytes.drain(..BOM.len());
    }
    let text = match String::from_utf8(bytes) {
        Ok(t) => t,
        Err(e) => {
            let good = &e.as_bytes()[..e.utf8_error().valid_up_to()];
            let good = std::str::from_utf8(good).unwrap_or("");
            let place = place_of_offset(good, good.len());
            return Err(LoadError {
                diagnostics: vec![Diagnostic {
                    file: name,
                    place,
                    severity: Severity::Error,
                    message: format!("the file is not UTF-8 text here (a {noun} file is plain text)"),
                }],
            });
        }
    };
    Ok((name, text))
}

/// The UTF-8 byte-order mark (EF BB BF) that some editors put at the start of a text file.
pub(crate) const BOM: &str = "\u{feff}";

/// Parses and validates bench text; `file` names it in messages. A byte-order mark at the start is
/// skipped, and lines and columns are counted in the text after it.
pub fn parse(file: &str, text: &str) -> Result<Loaded, LoadError> {
    parse_text(file, text.strip_prefix(BOM).unwrap_or(text))
}

/// [`parse`] of text with no byte-order mark.
fn parse_text(file: &str, text: &str) -> Result<Loaded, LoadError> {
    if text.trim().is_empty() {
        return Err(at_start(file, "the file is empty; a bench file starts with `(` and holds format, title, rail_length_mm, wavelengths_nm, primary_wavelength, object and parts".into()));
    }
    let locator = Locator::new(text);
    check_format(file, text, &locator, "bench", FORMAT)?;
    let bench: Bench = from_ron(file, text, "bench")?;
    let findings = validate(&bench);
    let diagnostics = placed(file, &findings, |f| locator.finding(&bench, f))?;
    Ok(Loaded { bench, warnings: diagnostics })
}

/// Refuses a `noun` file whose `format` is not `known`, before anything else is read, so that new fields
/// are never misread. The number is read straight from the text, so that a newer file's unknown syntax
/// cannot hide it.
pub(crate) fn check_format(
    file: &str,
    text: &str,
    locator: &Locator<'_>,
    noun: &str,
    known: u32,
) -> Result<(), LoadError> {
    if let Some(offset) = locator.key_offset(0, text.len(), "format") {
        let after = text[offset + "format".len()..].trim_start().trim_start_matches(':').trim_start();
        let digits: String = after.chars().take_while(|c| c.is_ascii_digit()).collect();
        if let Ok(f) = digits.parse::<u64>()
            && f != u64::from(known)
        {
            let place = place_of_offset(text, offset);
            let message = if f > u64::from(known) {
                format!(
                    "this {noun} is format {f}, newer than this Lumenrail reads (format {known}); open it with a newer Lumenrail"
                )
            } else {
                format!("format {f} is not a {noun} format (this Lumenrail reads format {known})")
            };
            return Err(LoadError {
                diagnostics: vec![Diagnostic { file: file.into(), place, severity: Severity::Error, message }],
            });
        }
    }
    Ok(())
}

/// Parses RON text with unknown fields refused, the error placed and said in plain words.
pub(crate) fn from_ron<T: serde::de::DeserializeOwned>(file: &str, text: &str, noun: &str) -> Result<T, LoadError> {
    ron::Options::default().with_recursion_limit(64).from_str(text).map_err(|e| LoadError {
        diagnostics: vec![Diagnostic {
            file: file.into(),
            place: Place { line: e.position.line.max(1), col: e.position.col.max(1) },
            severity: Severity::Error,
            message: ron_words(&e.code, noun),
        }],
    })
}

/// Validation findings placed in the file: the warnings, or every finding as a [`LoadError`] when any is
/// an error.
pub(crate) fn placed(
    file: &str,
    findings: &[Finding],
    place: impl Fn(&Finding) -> Place,
) -> Result<Vec<Diagnostic>, LoadError> {
    let diagnostics: Vec<Diagnostic> = findings
        .iter()
        .map(|f| Diagnostic { file: file.into(), place: place(f), severity: f.severity, message: f.message.clone() })
        .collect();
    if diagnostics.iter().any(|d| d.severity == Severity::Error) {
        return Err(LoadError { diagnostics });
    }
    Ok(diagnostics)
}

/// Plain words for an I/O error.
fn io_words(e: &std::io::Error) -> String {
    match e.kind() {
        std::io::ErrorKind::NotFound => "no such file".into(),
        std::io::ErrorKind::PermissionDenied => "permission denied".into(),
        _ => e.to_string(),
    }
}

/// Plain words for a RON error.
fn ron_words(e: &ron::Error, noun: &str) -> String {
    use ron::Error as E;
    match e {
        E::Eof => "the file ends too soon (a bracket or a field is missing)".into(),
        E::NoSuchExtension(x) => format!("unknown extension {x}"),
        E::NoSuchEnumVariant { expected, found, .. } => {
            format!("\"{found}\" is not one of the kinds allowed here: {}", expected.join(", "))
        }
        E::NoSuchStructField { expected, found, .. } => {
            let near = expected.iter().min_by_key(|x| lumenrail_optics::library::edit_distance(found, x));
            let hint = near.map_or(String::new(), |n| format!(" (did you mean `{n}`?)"));
            format!("unknown field `{found}`{hint}; the fields here are {}", expected.join(", "))
        }
        E::MissingStructField { field, outer } => match outer {
            Some(o) => format!("`{o}` is missing its field `{field}`"),
            None => format!("the field `{field}` is missing"),
        },
        E::DuplicateStructField { field, .. } => format!("the field `{field}` is given twice"),
        E::ExceededRecursionLimit => format!("the file is nested too deeply to be a {noun}"),
        other => format!("{other}"),
    }
}

/// Converts a byte offset in `text` to a line and column.
pub(crate) fn place_of_offset(text: &str, offset: usize) -> Place {
    let before = &text[..offset.min(text.len())];
    let line = before.matches('\n').count() + 1;
    let col = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    Place { line, col }
}

/// The value of the RON string literal that `text` starts with (escapes read as RON reads them).
fn string_literal(text: &str) -> Option<String> {
    let b = text.as_bytes();
    if b.first() != Some(&b'"') {
        return None;
    }
    let mut i = 1;
    while i < b.len() {
        match b[i] {
            b'\\' => i += 2,
            b'"' => return ron::from_str::<String>(&text[..=i]).ok(),
            _ => i += 1,
        }
    }
    None
}

/// Finds where things are in bench (or drawer) text: keys outside strings and comments, and each part by
/// its name (each drawer item by its place in the list).
pub(crate) struct Locator<'a> {
    text: &'a str,
    /// Byte offsets of code (not in strings or comments) as a mask.
    code: Vec<bool>,
}

impl<'a> Locator<'a> {
    pub(crate) fn new(text: &'a str) -> Locator<'a> {
        let b = text.as_bytes();
        let mut code = vec![true; b.len()];
        let mut i = 0;
        while i < b.len() {
            if b[i] == b'"' {
                code[i] = false;
                i += 1;
                while i < b.len() && b[i] != b'"' {
                    if b[i] == b'\\' && i + 1 < b.len() {
                        code[i] = false;
                        i += 1;
                    }
                    code[i] = false;
                    i += 1;
                }
                if i < b.len() {
                    code[i] = false;
                }
            } else if b[i] == b'/' && b.get(i + 1) == Some(&b'/') {
                while i < b.len() && b[i] != b'\n' {
                    code[i] = false;
                    i += 1;
                }
            }
            i += 1;
        }
        Locator { text, code }
    }

    /// Byte offset of `key` followed by `:` in code within `[from, to)`.
    pub(crate) fn key_offset(&self, from: usize, to: usize, key: &str) -> Option<usize> {
        let b = self.text.as_bytes();
        let mut start = from;
        while let Some(k) = self.text.get(start..to).and_then(|s| s.find(key)) {
            let at = start + k;
            let end = at + key.len();
            let word_before = at > 0 && (b[at - 1].is_ascii_alphanumeric() || b[at - 1] == b'_');
            let word_after = end < b.len() && (b[end].is_ascii_alphanumeric() || b[end] == b'_');
            let colon = self.text[end..].trim_start().starts_with(':');
            if self.code[at] && !word_before && !word_after && colon {
                return Some(at);
            }
            start = at + 1;
        }
        None
    }

    fn key(&self, from: usize, to: usize, key: &str) -> Option<Place> {
        self.key_offset(from, to, key).map(|o| place_of_offset(self.text, o))
    }

    /// Byte span of the part with this name (its `name:` key up to the next part's `name:` key), taking
    /// the `nth` such part for duplicate names.
    fn part_span(&self, name: &str, nth: usize) -> Option<(usize, usize)> {
        let starts = self.item_keys("parts", "name");
        let mut seen = 0;
        for (k, &at) in starts.iter().enumerate() {
            let end = starts.get(k + 1).copied().unwrap_or(self.text.len());
            let after = self.text[at + 4..].trim_start().strip_prefix(':').map(str::trim_start);
            if after.and_then(string_literal).is_some_and(|s| s == name) {
                if seen == nth {
                    // The part's tuple opens before its name; search back to its `(`.
                    let open = self.text[..at].rfind('(').unwrap_or(at);
                    return Some((open, end));
                }
                seen += 1;
            }
        }
        None
    }

    /// Byte offsets of every `item_key:` key after the `list_key:` key (each item of that list names
    /// itself by one such key).
    fn item_keys(&self, list_key: &str, item_key: &str) -> Vec<usize> {
        let list = self.key_offset(0, self.text.len(), list_key).unwrap_or(0);
        let mut starts = Vec::new();
        let mut from = list;
        while let Some(at) = self.key_offset(from, self.text.len(), item_key) {
            starts.push(at);
            from = at + item_key.len();
        }
        starts
    }

    /// Byte span of the `n`th item (from 0) of the list after `list_key:`, each item found by its
    /// `item_key:` key: from the item's `(` up to the next item's key.
    pub(crate) fn nth_item_span(&self, list_key: &str, item_key: &str, n: usize) -> Option<(usize, usize)> {
        let starts = self.item_keys(list_key, item_key);
        let at = *starts.get(n)?;
        let end = starts.get(n + 1).copied().unwrap_or(self.text.len());
        Some((self.text[..at].rfind('(').unwrap_or(at), end))
    }

    fn finding(&self, bench: &Bench, f: &Finding) -> Place {
        if let Some(field) = f.field.and_then(|k| k.strip_prefix("tolerances.")) {
            return self.tolerance_finding(bench, f, field);
        }
        let span = f.part.and_then(|i| {
            let name = &bench.parts[i].name;
            let nth = bench.parts[..i].iter().filter(|p| &p.name == name).count();
            self.part_span(name, nth)
        });
        self.place_in(span, f.field)
    }

    /// A tolerance entry's finding: the entry is the one whose own check gives this message; the place is
    /// `field`'s key in it (the entry's start when the field was left out).
    fn tolerance_finding(&self, bench: &Bench, f: &Finding, field: &str) -> Place {
        let n = (0..bench.tolerances.len())
            .find(|&n| crate::validate::tolerance_problems(bench, n).iter().any(|(_, m)| *m == f.message));
        let span = n.and_then(|n| self.nth_item_span("tolerances", "part", n));
        self.place_in(
            span.or_else(|| self.key_offset(0, self.text.len(), "tolerances").map(|o| (o, o + 1))),
            Some(field),
        )
    }

    /// The place of `field`'s key within `span` (the whole text when `None`), else the span's start, else
    /// the file's start.
    pub(crate) fn place_in(&self, span: Option<(usize, usize)>, field: Option<&str>) -> Place {
        let whole = (0, self.text.len());
        let (from, to) = span.unwrap_or(whole);
        let field_place = field.and_then(|k| self.key(from, to, k));
        field_place.or_else(|| span.map(|(s, _)| place_of_offset(self.text, s))).unwrap_or(Place { line: 1, col: 1 })
    }
}

/// Writes `bench` as RON text in the layout of the demo files: one line per field, one line per part,
/// parts in rail order.
pub fn to_text(bench: &Bench) -> String {
    let mut t = String::from("(\n");
    let _ = writeln!(t, "    format: {},", bench.format);
    let _ = writeln!(t, "    title: {},", one_line(&bench.title));
    let _ = writeln!(t, "    rail_length_mm: {},", one_line(&bench.rail_length_mm));
    let _ = writeln!(t, "    wavelengths_nm: {},", one_line(&bench.wavelengths_nm));
    let _ = writeln!(t, "    primary_wavelength: {},", bench.primary_wavelength);
    if !bench.wavelength_weights.is_empty() {
        let _ = writeln!(t, "    wavelength_weights: {},", one_line(&bench.wavelength_weights));
    }
    let _ = writeln!(t, "    object: {},", one_line(&bench.object));
    if let Some(laser) = &bench.laser {
        let _ = writeln!(t, "    laser: {},", one_line(laser));
    }
    t.push_str("    parts: [\n");
    for i in bench.rail_order() {
        let _ = writeln!(t, "        {},", one_line(&bench.parts[i]));
    }
    t.push_str("    ],\n");
    if !bench.aims.is_empty() {
        t.push_str("    aims: [\n");
        for aim in &bench.aims {
            let _ = writeln!(t, "        {},", one_line(aim));
        }
        t.push_str("    ],\n");
    }
    if !bench.tolerances.is_empty() {
        t.push_str("    tolerances: [\n");
        for tol in &bench.tolerances {
            let _ = writeln!(t, "        {},", one_line(tol));
        }
        t.push_str("    ],\n");
    }
    t.push_str(")\n");
    t
}

/// A value as one line of RON with a space after each separator.
pub(crate) fn one_line<T: serde::Serialize>(value: &T) -> String {
    let config = ron::ser::PrettyConfig::new().depth_limit(0).separator(" ").struct_names(false);
    ron::ser::to_string_pretty(value, config).expect("bench values always serialise")
}

/// Why a save failed (the old file, if any, is untouched).
#[derive(Debug, thiserror::Error)]
#[error("cannot save {path}: {source}")]
pub struct SaveError {
    /// The target file.
    pub path: PathBuf,
    /// What went wrong.
    pub source: std::io::Error,
}

/// Saves `bench` to `path` atomically (see [`write_atomic`]).
pub fn save(bench: &Bench, path: &Path) -> Result<(), SaveError> {
    write_atomic(path, to_text(bench).as_bytes())
}

/// Writes `bytes` to `path` atomically, so that a failed write leaves the old file as it was and leaves no
/// temporary file behind. Every save and export goes through here.
///
/// The bytes go to a fresh temporary file in the target's folder, which is flushed to disk, given the old
/// file's permissions (a new file gets the usual ones for a new file), renamed over the target, and then
/// the folder is flushed so that the rename itself survives a power cut. A `path` that is a symbolic link
/// writes the file it points to (created if it does not exist yet), and the link stays a link. Should only
/// the last step, the folder's flush, fail, the new bytes are in place but the error is still returned, as
/// the save may not survive a power cut.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), SaveError> {
    use std::io::Write;
    let err = |source| SaveError { path: path.to_path_buf(), source };
    let target = resolve_links(path).map_err(err)?;
    let dir = target.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let file_name = target.file_name().ok_or_else(|| err(std::io::Error::other("no file name")))?;
    let prefix = format!(".{}.", file_name.to_string_lossy());
    let mut builder = tempfile::Builder::new();
    builder.prefix(&prefix).suffix(".tmp");
    // A temporary file is private (0o600) by default; a new bench file should be like any other new file,
    // so ask for 0o666 and let the umask take its share, as `File::create` does.
    #[cfg(unix)]
    builder.permissions(std::os::unix::fs::PermissionsExt::from_mode(0o666));
    // Dropping `tmp` on any error below deletes the temporary file.
    let mut tmp = builder.tempfile_in(dir).map_err(err)?;
    tmp.write_all(bytes).map_err(err)?;
    if let Ok(old) = std::fs::metadata(&target)
        && old.is_file()
    {
        tmp.as_file().set_permissions(old.permissions()).map_err(err)?;
    }
    tmp.as_file().sync_all().map_err(err)?;
    tmp.persist(&target).map_err(|e| err(e.error))?;
    sync_dir(dir).map_err(err)
}

/// The file that `path` names, following symbolic links: `path` itself unless it is a link. A link whose
/// target does not exist yet is followed hop by hop, each relative target taken from the link's folder.
fn resolve_links(path: &Path) -> std::io::Result<PathBuf> {
    let is_link = |p: &Path| std::fs::symlink_metadata(p).is_ok_and(|m| m.file_type().is_symlink());
    if !is_link(path) {
        return Ok(path.to_path_buf());
    }
    match std::fs::canonicalize(path) {
        Ok(resolved) => return Ok(resolved),
        Err(e) if e.kind() != std::io::ErrorKind::NotFound => return Err(e),
        Err(_) => {}
    }
    // A dangling link (the file it names is yet to be written). 40 hops, as Linux allows.
    let mut at = path.to_path_buf();
    for _ in 0..40 {
        if !is_link(&at) {
            return Ok(at);
        }
        let next = std::fs::read_link(&at)?;
        let folder = at.parent().unwrap_or(Path::new(""));
        at = folder.join(next);
    }
    Err(std::io::Error::other("too many levels of symbolic links"))
}

/// Flushes a folder's entries (here, a rename) to disk.
#[cfg(unix)]
fn sync_dir(dir: &Path) -> std::io::Result<()> {
    std::fs::File::open(dir)?.sync_all()
}

/// Flushes a folder's entries to disk: not possible here. Outside unix the standard library cannot open a
/// folder as a file to flush it, so the rename is left to the file system.
#[cfg(not(unix))]
fn sync_dir(_dir: &Path) -> std::io::Result<()> {
    Ok(())
}
