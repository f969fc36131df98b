//! Scene files: RON text, versioned, written atomically.
//!
//! Reading happens in steps, each with its own error so a message can say exactly what to
//! fix: the text is read; numbers that are not finite (`NaN`, `inf`, `1e999`) are found with
//! their line and column; the `version` field is read on its own and decides which loader
//! parses the rest: version 2 is the current schema, version 1 (without `next_id`) is parsed
//! into its own struct and migrated; the scene is parsed with unknown fields refused; finally [`validate`] runs and its errors block loading while its
//! warnings are handed back beside the scene.
//!
//! Writing produces pretty, deterministic RON that reads back to an identical [`Scene`]
//! (floating-point numbers are written in their shortest exact form). [`save`] writes a
//! temporary file in the target's folder, syncs it, keeps the previous file as
//! `NAME.ron.bak` and renames the temporary file over the target, so a crash never leaves a
//! half-written scene behind.

use std::collections::HashMap;
use std::fmt;
use std::fs;
use std::io::{self, Read, Write};
use std::path::{Path, PathBuf};

use serde::Deserialize;

use super::validate::{Severity, shorten, shorten_words};
use super::{Problem, SCENE_VERSION, Scene, validate_with};

/// A scene read from a file, with the warnings found while checking it.
#[derive(Clone, Debug, PartialEq)]
pub struct Loaded {
    pub scene: Scene,
    /// Problems that do not stop a trace but may make a result mislead.
    pub warnings: Vec<Problem>,
    /// The geometric checks made while loading; hand them to
    /// [`crate::trace::Compiled::with_checks`] so the outlines are not validated again.
    pub checks: super::validate::GeometryChecks,
}

/// Why a scene file could not be loaded. Every message starts with the file (and the line
/// and column where there is one) and ends with what to do about it.
#[derive(Debug, thiserror::Error)]
pub enum LoadError {
    #[error("{path}: cannot read the file")]
    Io {
        path: String,
        #[source]
        source: io::Error,
    },
    #[error("{path}: this is {what}, not a scene file; give the path of a .ron file")]
    NotAFile { path: String, what: &'static str },
    #[error(
        "{path}: the file is larger than {limit} bytes, the most a scene file may have; a scene this size is almost certainly not a scene"
    )]
    TooLarge { path: String, limit: u64 },
    #[error("{path}:{line}:{col}: the file is not UTF-8 text; save it as UTF-8")]
    NotText { path: String, line: usize, col: usize },
    #[error("{path}:{line}:{col}: {message}")]
    Syntax { path: String, line: usize, col: usize, message: String },
    #[error(
        "{path}:{line}:{col}: the number `{text}` is not finite; every number in a scene must be an ordinary finite value"
    )]
    NotFinite { path: String, line: usize, col: usize, text: String },
    #[error(
        "{path}: the scene is version {version}, but this build reads versions 1 to {SCENE_VERSION}; open it with a newer Raydraft"
    )]
    NewerVersion { path: String, version: u32 },
    #[error("{path}: version {version} is not a scene version; the first version is 1")]
    BadVersion { path: String, version: u32 },
    #[error("{path}: {}", ProblemList(.path, .problems))]
    Invalid { path: String, problems: Vec<Problem> },
}

impl LoadError {
    /// The line and column the error points at, where there is one.
    pub fn position(&self) -> Option<(usize, usize)> {
        match self {
            Self::Syntax { line, col, .. } | Self::NotFinite { line, col, .. } | Self::NotText { line, col, .. } => {
                Some((*line, *col))
            }
            _ => None,
        }
    }
}

/// Why a scene could not be written.
#[derive(Debug, thiserror::Error)]
pub enum SaveError {
    #[error("{path}: cannot write the scene")]
    Io {
        path: String,
        #[source]
        source: io::Error,
    },
    #[error("cannot turn the scene into text: {0}")]
    Serialize(String),
}

/// Shows a list of problems, one per line after the first, errors first.
struct ProblemList<'a>(&'a str, &'a [Problem]);

impl fmt::Display for ProblemList<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let errors = self.1.iter().filter(|p| p.severity == Severity::Error).count();
        write!(f, "the scene has {errors} error{}", if errors == 1 { "" } else { "s" })?;
        for p in self.1 {
            match p.at {
                Some((line, col)) => write!(f, "\n  {}:{line}:{col}: {p}", self.0)?,
                None => write!(f, "\n  {p}")?,
            }
        }
        Ok(())
    }
}

/// The largest scene file [`load`] reads: 256 MiB.
pub const MAX_FILE_BYTES: u64 = 256 * 1024 * 1024;

/// Reads and checks the scene file at `path`.
pub fn load(path: impl AsRef<Path>) -> Result<Loaded, LoadError> {
    load_limited(path, MAX_FILE_BYTES)
}

/// [`load`] with a given size limit in bytes. Only regular files are read (not folders,
/// devices or pipes), and never more than `max_bytes + 1` bytes of them.
pub fn load_limited(path: impl AsRef<Path>, max_bytes: u64) -> Result<Loaded, LoadError> {
    let path = path.as_ref();
    let shown = path.display().to_string();
    let io_err = |source: io::Error| LoadError::Io { path: shown.clone(), source };
    let meta = fs::metadata(path).map_err(io_err)?;
    if !meta.is_file() {
        let what = if meta.is_dir() { "a folder" } else { "a device, pipe or socket" };
        return Err(LoadError::NotAFile { path: shown, what });
    }
    if meta.len() > max_bytes {
        return Err(LoadError::TooLarge { path: shown, limit: max_bytes });
    }
    let mut bytes = Vec::new();
    // The file may grow between the look and the read, so the read is limited as well.
    fs::File::open(path).and_then(|f| f.take(max_bytes + 1).read_to_end(&mut bytes)).map_err(io_err)?;
    if bytes.len() as u64 > max_bytes {
        return Err(LoadError::TooLarge { path: shown, limit: max_bytes });
    }
    let text = match String::from_utf8(bytes) {
        Ok(text) => text,
        Err(e) => {
            let good = &e.as_bytes()[..e.utf8_error().valid_up_to()];
            let (line, col) = line_col_at_end(good);
            return Err(LoadError::NotText { path: shown, line, col });
        }
    };
    from_str(&text, &shown)
}

/// Line and column (from 1, columns in characters) just after `bytes`, which are valid UTF-8.
fn line_col_at_end(bytes: &[u8]) -> (usize, usize) {
    let line = bytes.split(|&b| b == b'\n').count();
    let last_line = bytes.iter().rposition(|&b| b == b'\n').map_or(bytes, |i| &bytes[i + 1..]);
    let col = 1 + last_line.iter().filter(|&&b| b & 0xC0 != 0x80).count();
    (line, col)
}

/// Parses and checks scene text; `path_for_messages` names the text in error messages. A
/// leading byte-order mark is skipped.
pub fn from_str(text: &str, path_for_messages: &str) -> Result<Loaded, LoadError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let path = path_for_messages.to_owned();
    if let Some((line, col, token)) = find_non_finite(text) {
        return Err(LoadError::NotFinite { path, line, col, text: shorten(&token).into_owned() });
    }
    let mut scene = match read_version(text) {
        Some(1) => migrate_v1(parse_v1(text, &path)?),
        // Without a readable version the full parse gives the most precise message.
        None | Some(2) => parse_v2(text, &path)?,
        Some(0) => return Err(LoadError::BadVersion { path, version: 0 }),
        Some(version) => return Err(LoadError::NewerVersion { path, version }),
    };
    // A hand-edited file may carry a next id at or below an id in use; never hand it out twice.
    scene.fix_next_id();
    let mut checks = super::validate::GeometryChecks::default();
    let mut problems = validate_with(&scene, &mut checks);
    locate(&mut problems, text);
    if problems.iter().any(|p| p.severity == Severity::Error) {
        return Err(LoadError::Invalid { path, problems });
    }
    Ok(Loaded { scene, warnings: problems, checks })
}

/// Just the version of a scene file; every other field is skipped unread.
#[derive(Deserialize)]
struct VersionOnly {
    version: u32,
}

fn read_version(text: &str) -> Option<u32> {
    ron::from_str::<VersionOnly>(text).ok().map(|v| v.version)
}

/// The current schema parses straight into [`Scene`].
fn parse_v2(text: &str, path: &str) -> Result<Scene, LoadError> {
    ron::from_str::<Scene>(text).map_err(|e| syntax_error(&e, path))
}

/// A version-1 scene: as version 2, without `next_id` (ids were then taken as one past the
/// largest in use, so deleting the newest object let its id be given again).
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SceneV1 {
    version: u32,
    #[serde(default)]
    title: String,
    #[serde(default)]
    notes: String,
    #[serde(default = "super::default_ambient")]
    ambient: String,
    #[serde(default)]
    materials: Vec<crate::optics::Material>,
    #[serde(default)]
    settings: super::TraceSettings,
    objects: Vec<super::Object>,
}

fn parse_v1(text: &str, path: &str) -> Result<SceneV1, LoadError> {
    ron::from_str::<SceneV1>(text).map_err(|e| syntax_error(&e, path))
}

/// Version 1 → 2: the next id starts one past the largest id in the file; the version
/// becomes the current one (saving writes version 2).
fn migrate_v1(v1: SceneV1) -> Scene {
    debug_assert_eq!(v1.version, 1);
    let mut scene = Scene {
        version: SCENE_VERSION,
        title: v1.title,
        notes: v1.notes,
        ambient: v1.ambient,
        materials: v1.materials,
        settings: v1.settings,
        next_id: 1,
        objects: v1.objects,
        revision: 0,
    };
    scene.fix_next_id();
    scene
}

fn syntax_error(e: &ron::error::SpannedError, path: &str) -> LoadError {
    use ron::error::Error as E;
    let hint = match &e.code {
        E::NoSuchStructField { .. } => {
            "; remove the field or correct its spelling (docs/scene-format.md lists every field)"
        }
        E::NoSuchEnumVariant { .. } => "; use one of the names listed",
        E::MissingStructField { .. } => "; add the field (docs/scene-format.md says what it means)",
        E::DuplicateStructField { .. } => "; keep only one of them",
        E::Eof => "; the file ends too early, probably a missing `)` or `]`",
        E::IntegerOutOfBounds | E::ExpectedInteger | E::InvalidIntegerDigit { .. } => {
            "; write a whole number that is not negative (counts and ids cannot be negative or fractional)"
        }
        E::ExpectedFloat => "; write a number here, such as 1.0",
        E::ExpectedString | E::ExpectedStringEnd => "; write text in double quotes here",
        E::InvalidValueForType { .. } => "; write a value of the kind named",
        _ => "; see docs/scene-format.md for the expected form",
    };
    LoadError::Syntax {
        path: path.to_owned(),
        line: e.span.start.line,
        col: e.span.start.col,
        message: format!("{}{hint}", shorten_words(&e.code.to_string())),
    }
}

/// Gives each problem about an object the line and column of that object in `text`.
fn locate(problems: &mut [Problem], text: &str) {
    if !problems.iter().any(|p| p.object.is_some()) {
        return;
    }
    let places = object_positions(text);
    for p in problems {
        if let Some(id) = p.object_id() {
            p.at = places.get(&id).copied();
        }
    }
}

/// Where each object starts in scene text: for every field `id: N` (only objects have an
/// `id`), the `(` opening the object if it is the token before, else the `id` itself. Strings
/// and comments are skipped; the first place of a repeated id is kept. Lines and columns
/// count from 1, columns in characters.
fn object_positions(text: &str) -> HashMap<u64, (usize, usize)> {
    let b = text.as_bytes();
    let mut places = HashMap::new();
    let (mut i, mut line, mut col) = (0usize, 1usize, 1usize);
    // The last `(` seen and whether only blanks came after it.
    let mut open_paren: Option<(usize, usize)> = None;
    let step = |i: &mut usize, line: &mut usize, col: &mut usize| {
        if b[*i] == b'\n' {
            *line += 1;
            *col = 1;
        } else if b[*i] & 0xC0 != 0x80 {
            *col += 1;
        }
        *i += 1;
    };
    while i < b.len() {
        let c = b[i];
        let next = b.get(i + 1).copied();
        if c == b'/' && next == Some(b'/') {
            while i < b.len() && b[i] != b'\n' {
                step(&mut i, &mut line, &mut col);
            }
        } else if c == b'/' && next == Some(b'*') {
            let mut depth = 0usize;
            while i < b.len() {
                if b[i] == b'/' && b.get(i + 1) == Some(&b'*') {
                    depth += 1;
                    step(&mut i, &mut line, &mut col);
                } else if b[i] == b'*' && b.get(i + 1) == Some(&b'/') {
                    depth = depth.saturating_sub(1);
                    step(&mut i, &mut line, &mut col);
                    step(&mut i, &mut line, &mut col);
                    if depth == 0 {
                        break;
                    }
                    continue;
                }
                step(&mut i, &mut line, &mut col);
            }
            open_paren = None;
        } else if c == b'"' {
            step(&mut i, &mut line, &mut col);
            while i < b.len() && b[i] != b'"' {
                if b[i] == b'\\' && i + 1 < b.len() {
                    step(&mut i, &mut line, &mut col);
                }
                step(&mut i, &mut line, &mut col);
            }
            if i < b.len() {
                step(&mut i, &mut line, &mut col);
            }
            open_paren = None;
        } else if c == b'(' {
            open_paren = Some((line, col));
            step(&mut i, &mut line, &mut col);
        } else if c.is_ascii_whitespace() {
            step(&mut i, &mut line, &mut col);
        } else if c.is_ascii_alphabetic() || c == b'_' {
            let start = (line, col);
            let word_start = i;
            while i < b.len() && (b[i].is_ascii_alphanumeric() || b[i] == b'_') {
                step(&mut i, &mut line, &mut col);
            }
            if &b[word_start..i] == b"id" {
                let mut j = i;
                while j < b.len() && b[j].is_ascii_whitespace() {
                    j += 1;
                }
                if b.get(j) == Some(&b':') {
                    j += 1;
                    while j < b.len() && b[j].is_ascii_whitespace() {
                        j += 1;
                    }
                    let digits_end = (j..b.len()).find(|&k| !b[k].is_ascii_digit()).unwrap_or(b.len());
                    if let Ok(id) = text[j..digits_end].parse::<u64>() {
                        places.entry(id).or_insert(open_paren.unwrap_or(start));
                    }
                }
            }
            open_paren = None;
        } else {
            step(&mut i, &mut line, &mut col);
            open_paren = None;
        }
    }
    places
}

/// The scene as pretty, deterministic RON text.
pub fn to_string(scene: &Scene) -> Result<String, SaveError> {
    let config = ron::ser::PrettyConfig::new()
        .struct_names(false)
        .indentor("    ")
        .separate_tuple_members(false)
        .enumerate_arrays(false)
        .new_line("\n");
    let mut text = ron::ser::to_string_pretty(scene, config).map_err(|e| SaveError::Serialize(e.to_string()))?;
    text.push('\n');
    Ok(text)
}

/// Writes the scene to `path` atomically, keeping any previous file as `NAME.bak` beside it
/// (`light_guide.ron` → `light_guide.ron.bak`).
pub fn save(scene: &Scene, path: impl AsRef<Path>) -> Result<(), SaveError> {
    let path = path.as_ref();
    let text = to_string(scene)?;
    write_atomically(path, text.as_bytes(), true)
        .map_err(|source| SaveError::Io { path: path.display().to_string(), source })
}

/// Writes `bytes` to `path` so that a crash, a kill or a full disk never leaves a truncated
/// file in its place: the bytes go to a temporary file in the same folder, which is synced
/// and then renamed over `path`. With `backup`, an existing file is first copied to
/// `NAME.bak` beside it. On failure the temporary file is removed and `path` is untouched.
pub fn write_atomically(path: &Path, bytes: &[u8], backup: bool) -> io::Result<()> {
    static COUNTER: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);
    let Some(file_name) = path.file_name() else {
        return Err(io::Error::new(io::ErrorKind::InvalidInput, "the path does not name a file"));
    };
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let mut temp_name = std::ffi::OsString::from(".");
    temp_name.push(file_name);
    let n = COUNTER.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    temp_name.push(format!(".{}-{n}.tmp", std::process::id()));
    let temp = folder.join(temp_name);
    let write_temp = || -> io::Result<()> {
        let mut f = fs::File::create(&temp)?;
        f.write_all(bytes)?;
        f.flush()?;
        f.sync_all()
    };
    if let Err(e) = write_temp() {
        // The temporary file is ours and incomplete; losing it is right.
        let _ = fs::remove_file(&temp);
        return Err(e);
    }
    if backup && path.exists() {
        let mut backup_name = file_name.to_os_string();
        backup_name.push(".bak");
        if let Err(e) = fs::copy(path, folder.join(backup_name)) {
            let _ = fs::remove_file(&temp);
            return Err(e);
        }
    }
    if let Err(e) = fs::rename(&temp, path) {
        let _ = fs::remove_file(&temp);
        return Err(e);
    }
    // Make the rename itself durable where the platform allows syncing a folder.
    if let Ok(dir) = fs::File::open(&folder) {
        let _ = dir.sync_all();
    }
    Ok(())
}

/// Finds the first number in RON text that does not stand for a finite value: the words
/// `NaN` and `inf` (with any sign or suffix) and literals too large for f64, such as
/// `1e999`. Strings, characters and comments are skipped. Returns line, column (both from 1)
/// and the token.
// One pass over the text with its states side by side reads better than split helpers.
#[allow(clippy::too_many_lines)]
fn find_non_finite(text: &str) -> Option<(usize, usize, String)> {
    // Bytes, not chars: a quarter of the memory on a large file. Every byte this scanner acts
    // on is ASCII; other characters pass as parts of words, and columns count characters.
    let chars = text.as_bytes();
    let (mut i, mut line, mut col) = (0usize, 1usize, 1usize);
    // Moves past `n` characters, keeping the line and column.
    let advance = |i: &mut usize, line: &mut usize, col: &mut usize, n: usize| {
        for _ in 0..n {
            if *i >= chars.len() {
                return;
            }
            if chars[*i] == b'\n' {
                *line += 1;
                *col = 1;
            } else if chars[*i] & 0xC0 != 0x80 {
                *col += 1;
            }
            *i += 1;
        }
    };
    while i < chars.len() {
        let c = chars[i];
        let next = chars.get(i + 1).copied();
        if c == b'/' && next == Some(b'/') {
            while i < chars.len() && chars[i] != b'\n' {
                advance(&mut i, &mut line, &mut col, 1);
            }
        } else if c == b'/' && next == Some(b'*') {
            let mut depth = 0usize;
            while i < chars.len() {
                if chars[i] == b'/' && chars.get(i + 1) == Some(&b'*') {
                    depth += 1;
                    advance(&mut i, &mut line, &mut col, 2);
                } else if chars[i] == b'*' && chars.get(i + 1) == Some(&b'/') {
                    depth -= 1;
                    advance(&mut i, &mut line, &mut col, 2);
                    if depth == 0 {
                        break;
                    }
                } else {
                    advance(&mut i, &mut line, &mut col, 1);
                }
            }
        } else if c == b'"' || c == b'\'' {
            advance(&mut i, &mut line, &mut col, 1);
            while i < chars.len() && chars[i] != c {
                let step = if chars[i] == b'\\' { 2 } else { 1 };
                advance(&mut i, &mut line, &mut col, step);
            }
            advance(&mut i, &mut line, &mut col, 1);
        } else if c == b'r' && matches!(next, Some(b'#' | b'"')) {
            // A raw string r#"..."#: find the closing quote followed by as many hashes.
            let mut hashes = 0;
            while chars.get(i + 1 + hashes) == Some(&b'#') {
                hashes += 1;
            }
            if chars.get(i + 1 + hashes) != Some(&b'"') {
                advance(&mut i, &mut line, &mut col, 1);
                continue;
            }
            advance(&mut i, &mut line, &mut col, hashes + 2);
            while i < chars.len() {
                if chars[i] == b'"' && (1..=hashes).all(|k| chars.get(i + k) == Some(&b'#')) {
                    advance(&mut i, &mut line, &mut col, hashes + 1);
                    break;
                }
                advance(&mut i, &mut line, &mut col, 1);
            }
        } else if c.is_ascii_alphabetic() || c == b'_' || c >= 0x80 {
            let start = (i, line, col);
            while i < chars.len() && (chars[i].is_ascii_alphanumeric() || chars[i] == b'_' || chars[i] >= 0x80) {
                advance(&mut i, &mut line, &mut col, 1);
            }
            // The word ends before an ASCII byte or at the end, so this is a whole string slice.
            let word = text.get(start.0..i).unwrap_or_default();
            if matches!(word, "NaN" | "NaNf32" | "NaNf64" | "inf" | "inff32" | "inff64") {
                // A sign written just before the word belongs to the token.
                return match start.0.checked_sub(1).map(|k| chars[k]) {
                    Some(sign @ (b'+' | b'-')) => Some((start.1, start.2 - 1, format!("{}{word}", char::from(sign)))),
                    _ => Some((start.1, start.2, word.to_owned())),
                };
            }
        } else if c.is_ascii_digit() || (c == b'.' && next.is_some_and(|d| d.is_ascii_digit())) {
            let start = (line, col);
            let first = i;
            while i < chars.len() {
                let d = chars[i];
                let token = &chars[first..i];
                let after_exponent = matches!(token.last(), Some(b'e' | b'E')) && !token.starts_with(b"0x");
                if d.is_ascii_alphanumeric() || d == b'_' || d == b'.' || (after_exponent && (d == b'+' || d == b'-')) {
                    advance(&mut i, &mut line, &mut col, 1);
                } else {
                    break;
                }
            }
            // Only ASCII bytes were taken, so this is a whole string slice.
            let token = text.get(first..i).unwrap_or_default().to_owned();
            let is_radix = token.starts_with("0x") || token.starts_with("0b") || token.starts_with("0o");
            if !is_radix {
                let digits: String =
                    token.trim_end_matches("f64").trim_end_matches("f32").chars().filter(|&d| d != '_').collect();
                if let Ok(v) = digits.parse::<f64>() {
                    if !v.is_finite() {
                        return Some((start.0, start.1, token));
                    }
                }
            }
        } else {
            advance(&mut i, &mut line, &mut col, 1);
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn non_finite_words_and_literals_are_found_with_their_place() {
        assert_eq!(find_non_finite("(a: 1.0,\n b: NaN)"), Some((2, 5, "NaN".to_owned())));
        assert_eq!(find_non_finite("(a: -inf)"), Some((1, 5, "-inf".to_owned())));
        assert_eq!(find_non_finite("(a: 1e999)"), Some((1, 5, "1e999".to_owned())));
        assert_eq!(find_non_finite("(a: 1.5e-3, b: 0x1e, c: 2E+2)"), None);
        // Columns count characters, not bytes.
        assert_eq!(find_non_finite("(t: \"é\", a: NaN)"), Some((1, 13, "NaN".to_owned())));
        assert_eq!(find_non_finite("(é: +inf)"), Some((1, 5, "+inf".to_owned())));
        assert_eq!(find_non_finite("(éNaN: 1.0)"), None);
    }

    #[test]
    fn objects_are_found_by_their_id_at_their_opening_parenthesis() {
        let text = "(\n  objects: [\n    (id: 3, name: \"id: 9\"), // id: 8\n    /* (id: 7) */ ( id :12 ),\n    (name: \"é\", id: 5),\n  ],\n)";
        let places = object_positions(text);
        assert_eq!(places.get(&3), Some(&(3, 5)));
        assert_eq!(places.get(&12), Some(&(4, 19)));
        // Not right after a parenthesis: the `id` itself.
        assert_eq!(places.get(&5), Some(&(5, 17)));
        assert_eq!(places.len(), 3, "{places:?}");
    }

    #[test]
    fn strings_and_comments_are_skipped() {
        assert_eq!(find_non_finite("(t: \"NaN \\\" inf\", // inf\n /* NaN /* inf */ */ n: r#\"NaN\"#)"), None);
        assert_eq!(find_non_finite("(information: 1.0, nancy: 2.0)"), None);
    }
}

#[cfg(test)]
mod atomic_tests {
    use super::*;

    #[test]
    fn a_failed_write_leaves_the_old_file_and_no_temporary_file() {
        let dir = tempfile::tempdir().expect("temp dir");
        // A folder where the file should be: the rename over it fails.
        let target = dir.path().join("out.csv");
        fs::create_dir(&target).expect("folder");
        fs::write(target.join("keep"), "kept").expect("inside");
        assert!(write_atomically(&target, b"new", false).is_err());
        assert_eq!(fs::read_to_string(target.join("keep")).expect("kept"), "kept");
        let names: Vec<_> =
            fs::read_dir(dir.path()).expect("list").filter_map(Result::ok).map(|e| e.file_name()).collect();
        assert_eq!(names.len(), 1, "{names:?}");
    }

    #[test]
    fn a_write_replaces_the_file_whole() {
        let dir = tempfile::tempdir().expect("temp dir");
        let target = dir.path().join("out.csv");
        fs::write(&target, "old").expect("old");
        write_atomically(&target, b"new contents", false).expect("writes");
        assert_eq!(fs::read_to_string(&target).expect("read"), "new contents");
        assert_eq!(fs::read_dir(dir.path()).expect("list").count(), 1);
    }
}
