//! Shared helpers of the command-line tests: run the binary, and a small
//! strict JSON parser (RFC 8259 subset: objects, arrays, strings with
//! escapes, numbers, true/false/null) so the tests read the tool's JSON
//! without trusting the tool's own writer.
#![allow(dead_code)]

use std::collections::BTreeMap;
use std::process::{Command, Output};

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

/// A parsed JSON value.
#[derive(Debug, Clone, PartialEq)]
pub enum J {
    Null,
    Bool(bool),
    Num(f64),
    Str(String),
    Arr(Vec<J>),
    Obj(BTreeMap<String, J>),
}

impl J {
    /// Member of an object (panics with the key name if absent).
    pub fn at(&self, key: &str) -> &J {
        match self {
            J::Obj(m) => m
                .get(key)
                .unwrap_or_else(|| panic!("missing key {key} in {self:?}")),
            _ => panic!("not an object looking up {key}"),
        }
    }
    pub fn num(&self) -> f64 {
        match self {
            J::Num(x) => *x,
            _ => panic!("not a number: {self:?}"),
        }
    }
    pub fn str(&self) -> &str {
        match self {
            J::Str(s) => s,
            _ => panic!("not a string: {self:?}"),
        }
    }
    pub fn arr(&self) -> &[J] {
        match self {
            J::Arr(a) => a,
            _ => panic!("not an array: {self:?}"),
        }
    }
    /// `{"value", "quality"}` → (value, quality); value NaN if null.
    pub fn measured(&self) -> (f64, &str) {
        let q = self.at("quality").str();
        let v = match self.at("value") {
            J::Null => f64::NAN,
            v => v.num(),
        };
        (v, q)
    }
    /// The value of a `{"value", "quality"}` member, which must be usable.
    pub fn value(&self, key: &str) -> f64 {
        let (v, q) = self.at(key).measured();
        assert_ne!(q, "bad", "{key} is bad");
        v
    }
    /// Every object key anywhere in the tree.
    pub fn all_keys(&self, out: &mut Vec<String>) {
        match self {
            J::Obj(m) => {
                for (k, v) in m {
                    out.push(k.clone());
                    v.all_keys(out);
                }
            }
            J::Arr(a) => a.iter().for_each(|v| v.all_keys(out)),
            _ => {}
        }
    }
}

/// Parses a complete JSON text.
pub fn parse(text: &str) -> J {
    let mut p = P {
        s: text.as_bytes(),
        i: 0,
    };
    let v = p.value();
    p.ws();
    assert_eq!(p.i, p.s.len(), "trailing characters after JSON");
    v
}

struct P<'a> {
    s: &'a [u8],
    i: usize,
}

impl P<'_> {
    fn ws(&mut self) {
        while self.i < self.s.len() && matches!(self.s[self.i], b' ' | b'\n' | b'\r' | b'\t') {
            self.i += 1;
        }
    }
    fn eat(&mut self, c: u8) {
        self.ws();
        assert_eq!(
            self.s.get(self.i),
            Some(&c),
            "expected {} at {}",
            c as char,
            self.i
        );
        self.i += 1;
    }
    fn lit(&mut self, word: &str, v: J) -> J {
        assert!(
            self.s[self.i..].starts_with(word.as_bytes()),
            "bad literal at {}",
            self.i
        );
        self.i += word.len();
        v
    }
    fn value(&mut self) -> J {
        self.ws();
        match self.s.get(self.i).copied() {
            Some(b'{') => {
                self.i += 1;
                let mut m = BTreeMap::new();
                self.ws();
                if self.s[self.i] == b'}' {
                    self.i += 1;
                    return J::Obj(m);
                }
                loop {
                    self.ws();
                    let J::Str(k) = self.string() else {
                        unreachable!()
                    };
                    self.eat(b':');
                    let v = self.value();
                    assert!(m.insert(k.clone(), v).is_none(), "duplicate key {k}");
                    self.ws();
                    match self.s[self.i] {
                        b',' => self.i += 1,
                        b'}' => {
                            self.i += 1;
                            return J::Obj(m);
                        }
                        c => panic!("unexpected {} in object", c as char),
                    }
                }
            }
            Some(b'[') => {
                self.i += 1;
                let mut a = Vec::new();
                self.ws();
                if self.s[self.i] == b']' {
                    self.i += 1;
                    return J::Arr(a);
                }
                loop {
                    a.push(self.value());
                    self.ws();
                    match self.s[self.i] {
                        b',' => self.i += 1,
                        b']' => {
                            self.i += 1;
                            return J::Arr(a);
                        }
                        c => panic!("unexpected {} in array", c as char),
                    }
                }
            }
            Some(b'"') => self.string(),
            Some(b't') => self.lit("true", J::Bool(true)),
            Some(b'f') => self.lit("false", J::Bool(false)),
            Some(b'n') => self.lit("null", J::Null),
            _ => self.number(),
        }
    }
    fn string(&mut self) -> J {
        assert_eq!(self.s[self.i], b'"');
        self.i += 1;
        let mut out = String::new();
        loop {
            let c = self.s[self.i];
            self.i += 1;
            match c {
                b'"' => return J::Str(out),
                b'\\' => {
                    let e = self.s[self.i];
                    self.i += 1;
                    match e {
                        b'"' => out.push('"'),
                        b'\\' => out.push('\\'),
                        b'/' => out.push('/'),
                        b'n' => out.push('\n'),
                        b't' => out.push('\t'),
                        b'r' => out.push('\r'),
                        b'b' => out.push('\u{8}'),
                        b'f' => out.push('\u{c}'),
                        b'u' => {
                            let hex = std::str::from_utf8(&self.s[self.i..self.i + 4]).unwrap();
                            self.i += 4;
                            out.push(
                                char::from_u32(u32::from_str_radix(hex, 16).unwrap()).unwrap(),
                            );
                        }
                        _ => panic!("bad escape"),
                    }
                }
                c if c < 0x20 => panic!("control character in string"),
                _ => {
                    // Copy the whole UTF-8 sequence.
                    let start = self.i - 1;
                    let mut end = self.i;
                    while end < self.s.len() && (self.s[end] & 0xC0) == 0x80 {
                        end += 1;
                    }
                    out.push_str(std::str::from_utf8(&self.s[start..end]).unwrap());
                    self.i = end;
                }
            }
        }
    }
    fn number(&mut self) -> J {
        let start = self.i;
        while self.i < self.s.len()
            && matches!(
                self.s[self.i],
                b'-' | b'+' | b'.' | b'e' | b'E' | b'0'..=b'9'
            )
        {
            self.i += 1;
        }
        let t = std::str::from_utf8(&self.s[start..self.i]).unwrap();
        // JSON grammar: no leading '+', no bare '.', digits on both sides of '.'.
        assert!(
            !t.is_empty() && !t.starts_with('+') && !t.starts_with('.') && !t.contains(".e"),
            "bad number '{t}' at {start}"
        );
        let x: f64 = t.parse().unwrap_or_else(|_| panic!("bad number '{t}'"));
        assert!(x.is_finite());
        J::Num(x)
    }
}
