//! Mutation fuzzing of the loader and the tracer on a fixed seed: every demo scene and every
//! test file is mutated (bytes replaced, ranges cut or repeated, hostile numbers and tokens
//! spliced in, halves of two files joined) and the result is loaded, checked and, when it
//! loads, traced under small limits. Nothing may panic, every error must name a line and
//! column or say what is wrong, and every trace must give a finite budget that closes.
//!
//! The number of cases defaults to a few thousand so the suite stays quick; set
//! `RAYDRAFT_FUZZ_CASES` for a long run, e.g.
//! `RAYDRAFT_FUZZ_CASES=300000 cargo test --test file_fuzz -- --nocapture`, and
//! `RAYDRAFT_FUZZ_SEED` for another sequence of mutants.
//! (A coverage-guided fuzzer such as cargo-fuzz needs a nightly toolchain, which the project's
//! machines do not have; this stable, reproducible loop stands in for it.)

use raydraft::rng::Rng;
use raydraft::scene::file;
use raydraft::trace::{TraceConfig, trace};

/// Tokens that have broken parsers and numeric code before: extremes, non-numbers, deep
/// nesting, field names out of place, and odd characters.
const TOKENS: &[&str] = &[
    "1e308",
    "-1e308",
    "1e-320",
    "0",
    "-0.0",
    "NaN",
    "inf",
    "-inf",
    "18446744073709551616",
    "4294967295",
    "-1",
    "((((((((((((((((((((",
    "))))",
    "[",
    "]",
    ",",
    ":",
    "\"",
    "\u{feff}",
    "\u{0}",
    "é",
    "Outline(points: [])",
    "bulges: [1e300]",
    "rays: 4000000000",
    "threshold: 0",
    "max_depth: 4294967295",
    "max_stored_events: 0",
    "version: 99",
    "id: 1",
    "material: \"nothing\"",
    "Ball(position: (0, 0), radius: 0)",
];

fn seeds() -> Vec<(String, String)> {
    let mut out = Vec::new();
    for dir in ["scenes", "tests/data", "tests/data/bad"] {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(dir);
        let Ok(entries) = std::fs::read_dir(&path) else { continue };
        let mut files: Vec<_> = entries.filter_map(Result::ok).map(|e| e.path()).collect();
        files.sort();
        for f in files.into_iter().filter(|f| f.extension().is_some_and(|e| e == "ron")) {
            if let Ok(text) = std::fs::read_to_string(&f) {
                out.push((f.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_default(), text));
            }
        }
    }
    out
}

/// A char boundary at or before `k`.
fn floor(s: &str, mut k: usize) -> usize {
    k = k.min(s.len());
    while !s.is_char_boundary(k) {
        k -= 1;
    }
    k
}

fn mutate(rng: &mut Rng, text: &str, other: &str) -> String {
    let n = text.len().max(1);
    let a = floor(text, rng.below(n));
    let b = floor(text, (a + 1 + rng.below(64)).min(text.len()));
    // Numbers are changed most often: such mutants still parse and reach the tracer.
    match rng.below(10) {
        // Replace a run with a hostile token.
        0 => format!("{}{}{}", &text[..a], TOKENS[rng.below(TOKENS.len())], &text[b..]),
        // Insert a token.
        1 => format!("{}{}{}", &text[..a], TOKENS[rng.below(TOKENS.len())], &text[a..]),
        // Cut a run.
        2 => format!("{}{}", &text[..a], &text[b..]),
        // Repeat a run.
        3 => format!("{}{}{}", &text[..b], &text[a..b], &text[b..]),
        // Replace one number with another of a different size.
        4..=7 => {
            let digits: Vec<usize> = text.match_indices(|c: char| c.is_ascii_digit()).map(|(i, _)| i).collect();
            if digits.is_empty() {
                return text.to_owned();
            }
            let k = digits[rng.below(digits.len())];
            let end = text[k..]
                .find(|c: char| !(c.is_ascii_digit() || c == '.' || c == 'e' || c == '-'))
                .map_or(text.len(), |e| k + e);
            // Whole numbers (ids, counts, the version) stay whole so the file still parses.
            let scale = if text[k..end].contains('.') {
                ["0.0", "1e-12", "1e12", "-5.0", "3.5", "1e9", "0.0001", "180.0"][rng.below(8)]
            } else {
                ["0", "1", "2", "7", "1000", "65535"][rng.below(6)]
            };
            format!("{}{}{}", &text[..k], scale, &text[end..])
        }
        // The first part of this file and the last of another.
        8 => {
            let c = floor(other, rng.below(other.len().max(1)));
            format!("{}{}", &text[..a], &other[c..])
        }
        // Flip one byte to another ASCII character.
        _ => {
            let mut bytes = text.as_bytes().to_vec();
            if let Some(x) = bytes.get_mut(a) {
                if x.is_ascii() {
                    *x = b" (),:[]\"0123456789.-eE_abcxyz"[rng.below(29)];
                }
            }
            String::from_utf8(bytes).unwrap_or_else(|_| text.to_owned())
        }
    }
}

#[test]
fn mutated_files_never_panic_and_every_trace_closes() {
    let seeds = seeds();
    assert!(seeds.len() >= 20, "the demo scenes and test files are the fuzzing seeds");
    let cases: usize = std::env::var("RAYDRAFT_FUZZ_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(10_000);
    let seed = std::env::var("RAYDRAFT_FUZZ_SEED").ok().and_then(|v| v.parse().ok()).unwrap_or(0x5eed_f11e);
    let mut rng = Rng::new(seed);
    let (mut loaded, mut refused, mut traced) = (0usize, 0usize, 0usize);
    for case in 0..cases {
        let (name, text) = &seeds[rng.below(seeds.len())];
        let (_, other) = &seeds[rng.below(seeds.len())];
        let mut t = text.clone();
        for _ in 0..=rng.below(2) {
            t = mutate(&mut rng, &t, other);
        }
        match file::from_str(&t, name) {
            Err(e) => {
                refused += 1;
                let msg = e.to_string();
                assert!(!msg.is_empty() && msg.len() < 4_000, "case {case}: an unreadable message: {msg:.200}");
            }
            Ok(l) => {
                loaded += 1;
                let _ = raydraft::scene::validate(&l.scene);
                // Small limits: a handful of rays, short paths, few events.
                let mut config = TraceConfig::from_scene(&l.scene);
                config.rays = Some(3);
                config.threads = Some(1);
                config.settings.max_depth = config.settings.max_depth.min(60);
                config.settings.max_stored_events = config.settings.max_stored_events.min(2_000);
                config.settings.threshold = config.settings.threshold.max(1e-6);
                config.max_branches_per_ray = 200;
                let tr = trace(&l.scene, &config);
                traced += 1;
                let b = &tr.budget;
                assert!(b.launched.is_finite() && b.accounted().is_finite(), "case {case}: a non-finite budget\n{t}");
                assert!(
                    b.closure_error() <= 1e-9,
                    "case {case}: the budget does not close ({}):\n{t}",
                    b.closure_error()
                );
            }
        }
    }
    eprintln!("file fuzz: {cases} cases, {loaded} loaded and traced ({traced}), {refused} refused with a message");
    assert!(loaded > cases / 10, "too few mutants load to exercise the tracer: {loaded}");
}
