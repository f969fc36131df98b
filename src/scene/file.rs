//! Scene files: RON text, versioned, written atomically.
//!
//! Reading happens in steps, each with its own error so a message can say exactly what to
//! fix: the text is read; numbers that are not finite (`NaN`, `inf`, `1e999`) are found with
//! their line and column; the `version` field is read on its own and decides which loader
//! parses the rest (so a later schema can migrate older files); the scene is parsed with
//! unknown fields refused; finally [`validate`] runs and its errors block loading while its
//! warnings are handed back beside the scene.
//!
//! Writing produces pretty, deterministic RON that reads back to an identical [`Scene`]
//! (floating-point numbers are written in their shortest exact form). [`save`] writes a
//! temporary file in the target's folder, syncs it, keeps the previous file as
//! `NAME.ron.bak` and renames the temporary file over the target, so a crash never leaves a
//! half-written scene behind.

use std::fmt;
use std::fs;
use std::io::{self, Write};
use std::path::{Path, PathBuf};

use serde::Deserialize;

use super::validate::Severity;
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
    #[error("{path}: {}", ProblemList(.problems))]
    Invalid { path: String, problems: Vec<Problem> },
}

impl LoadError {
    /// The line and column the error points at, where there is one.
    pub fn position(&self) -> Option<(usize, usize)> {
        match self {
            Self::Syntax { line, col, .. } | Self::NotFinite { line, col, .. } => Some((*line, *col)),
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
struct ProblemList<'a>(&'a [Problem]);

impl fmt::Display for ProblemList<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let errors = self.0.iter().filter(|p| p.severity == Severity::Error).count();
        write!(f, "the scene has {errors} error{}", if errors == 1 { "" } else { "s" })?;
        for p in self.0 {
            write!(f, "\n  {p}")?;
        }
        Ok(())
    }
}

/// Reads and checks the scene file at `path`.
pub fn load(path: impl AsRef<Path>) -> Result<Loaded, LoadError> {
    let path = path.as_ref();
    let text = fs::read_to_string(path).map_err(|source| LoadError::Io { path: path.display().to_string(), source })?;
    from_str(&text, &path.display().to_string())
}

/// Parses and checks scene text; `path_for_messages` names the text in error messages.
pub fn from_str(text: &str, path_for_messages: &str) -> Result<Loaded, LoadError> {
    let path = path_for_messages.to_owned();
    if let Some((line, col, token)) = find_non_finite(text) {
        return Err(LoadError::NotFinite { path, line, col, text: token });
    }
    let scene = match read_version(text) {
        // Without a readable version the full parse gives the most precise message.
        None | Some(1) => parse_v1(text, &path)?,
        Some(0) => return Err(LoadError::BadVersion { path, version: 0 }),
        Some(version) => return Err(LoadError::NewerVersion { path, version }),
    };
    let mut checks = super::validate::GeometryChecks::default();
    let problems = validate_with(&scene, &mut checks);
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

/// Version 1 is the current schema, so it parses straight into [`Scene`]. A later version
/// would parse old files into their own structs here and convert them.
fn parse_v1(text: &str, path: &str) -> Result<Scene, LoadError> {
    ron::from_str::<Scene>(text).map_err(|e| syntax_error(&e, path))
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
        message: format!("{}{hint}", e.code),
    }
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
    let io_err = |source: io::Error| SaveError::Io { path: path.display().to_string(), source };
    let Some(file_name) = path.file_name() else {
        return Err(io_err(io::Error::new(io::ErrorKind::InvalidInput, "the path does not name a file")));
    };
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let mut temp_name = std::ffi::OsString::from(".");
    temp_name.push(file_name);
    temp_name.push(format!(".{}.tmp", std::process::id()));
    let temp = folder.join(temp_name);
    let write_temp = || -> io::Result<()> {
        let mut f = fs::File::create(&temp)?;
        f.write_all(text.as_bytes())?;
        f.flush()?;
        f.sync_all()
    };
    if let Err(e) = write_temp() {
        // The temporary file is ours and incomplete; losing it is right.
        let _ = fs::remove_file(&temp);
        return Err(io_err(e));
    }
    if path.exists() {
        let mut backup_name = file_name.to_os_string();
        backup_name.push(".bak");
        if let Err(e) = fs::copy(path, folder.join(backup_name)) {
            let _ = fs::remove_file(&temp);
            return Err(io_err(e));
        }
    }
    if let Err(e) = fs::rename(&temp, path) {
        let _ = fs::remove_file(&temp);
        return Err(io_err(e));
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
    let chars: Vec<char> = text.chars().collect();
    let (mut i, mut line, mut col) = (0usize, 1usize, 1usize);
    // Moves past `n` characters, keeping the line and column.
    let advance = |i: &mut usize, line: &mut usize, col: &mut usize, n: usize| {
        for _ in 0..n {
            if *i >= chars.len() {
                return;
            }
            if chars[*i] == '\n' {
                *line += 1;
                *col = 1;
            } else {
                *col += 1;
            }
            *i += 1;
        }
    };
    while i < chars.len() {
        let c = chars[i];
        let next = chars.get(i + 1).copied();
        if c == '/' && next == Some('/') {
            while i < chars.len() && chars[i] != '\n' {
                advance(&mut i, &mut line, &mut col, 1);
            }
        } else if c == '/' && next == Some('*') {
            let mut depth = 0usize;
            while i < chars.len() {
                if chars[i] == '/' && chars.get(i + 1) == Some(&'*') {
                    depth += 1;
                    advance(&mut i, &mut line, &mut col, 2);
                } else if chars[i] == '*' && chars.get(i + 1) == Some(&'/') {
                    depth -= 1;
                    advance(&mut i, &mut line, &mut col, 2);
                    if depth == 0 {
                        break;
                    }
                } else {
                    advance(&mut i, &mut line, &mut col, 1);
                }
            }
        } else if c == '"' || c == '\'' {
            advance(&mut i, &mut line, &mut col, 1);
            while i < chars.len() && chars[i] != c {
                let step = if chars[i] == '\\' { 2 } else { 1 };
                advance(&mut i, &mut line, &mut col, step);
            }
            advance(&mut i, &mut line, &mut col, 1);
        } else if c == 'r' && matches!(next, Some('#' | '"')) {
            // A raw string r#"..."#: find the closing quote followed by as many hashes.
            let mut hashes = 0;
            while chars.get(i + 1 + hashes) == Some(&'#') {
                hashes += 1;
            }
            if chars.get(i + 1 + hashes) != Some(&'"') {
                advance(&mut i, &mut line, &mut col, 1);
                continue;
            }
            advance(&mut i, &mut line, &mut col, hashes + 2);
            while i < chars.len() {
                if chars[i] == '"' && (1..=hashes).all(|k| chars.get(i + k) == Some(&'#')) {
                    advance(&mut i, &mut line, &mut col, hashes + 1);
                    break;
                }
                advance(&mut i, &mut line, &mut col, 1);
            }
        } else if c.is_alphabetic() || c == '_' {
            let start = (i, line, col);
            let mut word = String::new();
            while i < chars.len() && (chars[i].is_alphanumeric() || chars[i] == '_') {
                word.push(chars[i]);
                advance(&mut i, &mut line, &mut col, 1);
            }
            if matches!(word.as_str(), "NaN" | "NaNf32" | "NaNf64" | "inf" | "inff32" | "inff64") {
                // A sign written just before the word belongs to the token.
                return match start.0.checked_sub(1).map(|k| chars[k]) {
                    Some(sign @ ('+' | '-')) => Some((start.1, start.2 - 1, format!("{sign}{word}"))),
                    _ => Some((start.1, start.2, word)),
                };
            }
        } else if c.is_ascii_digit() || (c == '.' && next.is_some_and(|d| d.is_ascii_digit())) {
            let start = (line, col);
            let mut token = String::new();
            while i < chars.len() {
                let d = chars[i];
                let after_exponent = matches!(token.chars().last(), Some('e' | 'E')) && !token.starts_with("0x");
                if d.is_ascii_alphanumeric() || d == '_' || d == '.' || (after_exponent && (d == '+' || d == '-')) {
                    token.push(d);
                    advance(&mut i, &mut line, &mut col, 1);
                } else {
                    break;
                }
            }
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
    }

    #[test]
    fn strings_and_comments_are_skipped() {
        assert_eq!(find_non_finite("(t: \"NaN \\\" inf\", // inf\n /* NaN /* inf */ */ n: r#\"NaN\"#)"), None);
        assert_eq!(find_non_finite("(information: 1.0, nancy: 2.0)"), None);
    }
}
