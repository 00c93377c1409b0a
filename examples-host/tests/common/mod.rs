//! Shared helpers of the command-line tests: run the binary, and read its
//! JSON with `serde_json` (an outside parser, not the tool's writer).
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// A fresh scratch folder for one test: `polytrope-{suite}-{pid}-{name}`
/// in the system's temporary folder, emptied first.
pub fn scratch(suite: &str, name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("polytrope-{suite}-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("a scratch folder");
    dir
}

/// A test path as text (the test paths are UTF-8).
pub fn s(p: &Path) -> &str {
    p.to_str().expect("a UTF-8 path")
}

/// Runs `polytrope-host` with `args`.
pub fn run(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_polytrope-host"))
        .args(args)
        .output()
        .expect("the binary runs")
}

/// Runs and expects success; returns stdout.
pub fn ok(args: &[&str]) -> String {
    let out = run(args);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "{args:?} failed: {stderr}");
    String::from_utf8(out.stdout).expect("UTF-8 output")
}

/// Runs and expects failure without a panic; returns (exit code, stderr).
pub fn fails(args: &[&str]) -> (i32, String) {
    let out = run(args);
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert!(!out.status.success(), "{args:?} should fail");
    assert!(!stderr.contains("panicked"), "{args:?} panicked: {stderr}");
    assert!(
        stderr.contains("error:"),
        "{args:?}: no error message: {stderr}"
    );
    (out.status.code().unwrap_or(-1), stderr)
}

/// A parsed JSON value (`serde_json`).
pub use serde_json::Value as J;

/// Lookups that fail the test with a message instead of returning `None`.
pub trait JExt {
    /// Member of an object (panics with the key name if absent).
    fn at(&self, key: &str) -> &J;
    /// A number.
    fn num(&self) -> f64;
    /// A string.
    fn str(&self) -> &str;
    /// An array.
    fn arr(&self) -> &[J];
    /// `{"value", "quality"}` → (value, quality); value NaN if null.
    fn measured(&self) -> (f64, &str);
    /// The value of a `{"value", "quality"}` member, which must be usable.
    fn value(&self, key: &str) -> f64;
    /// Every object key anywhere in the tree.
    fn all_keys(&self, out: &mut Vec<String>);
}

impl JExt for J {
    fn at(&self, key: &str) -> &J {
        self.get(key)
            .unwrap_or_else(|| panic!("missing key {key} in {self:?}"))
    }
    fn num(&self) -> f64 {
        self.as_f64()
            .unwrap_or_else(|| panic!("not a number: {self:?}"))
    }
    fn str(&self) -> &str {
        self.as_str()
            .unwrap_or_else(|| panic!("not a string: {self:?}"))
    }
    fn arr(&self) -> &[J] {
        self.as_array()
            .unwrap_or_else(|| panic!("not an array: {self:?}"))
    }
    fn measured(&self) -> (f64, &str) {
        let q = self.at("quality").str();
        let v = match self.at("value") {
            J::Null => f64::NAN,
            v => v.num(),
        };
        (v, q)
    }
    fn value(&self, key: &str) -> f64 {
        let (v, q) = self.at(key).measured();
        assert_ne!(q, "bad", "{key} is bad");
        v
    }
    fn all_keys(&self, out: &mut Vec<String>) {
        match self {
            J::Object(m) => {
                for (k, v) in m {
                    out.push(k.clone());
                    v.all_keys(out);
                }
            }
            J::Array(a) => a.iter().for_each(|v| v.all_keys(out)),
            _ => {}
        }
    }
}

/// Parses a complete JSON text (strict: `serde_json`).
pub fn parse(text: &str) -> J {
    serde_json::from_str(text).unwrap_or_else(|e| panic!("invalid JSON ({e}): {text}"))
}
