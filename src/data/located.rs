//! Where a catalogue file's text is, for errors that name the file, the line, the entry and
//! the field.

use std::ops::Range;

use super::format::ParseFailure;
use crate::error::{CatalogFileError, Error};

/// Where a file's text is: its name and the start of each line, for line numbers.
pub(crate) struct Located<'a> {
    pub file: &'a str,
    pub text: &'a str,
}

impl Located<'_> {
    /// The 1-based line of byte offset `at`.
    pub fn line_of(&self, at: usize) -> usize {
        let at = at.min(self.text.len());
        self.text.as_bytes()[..at].iter().filter(|&&b| b == b'\n').count() + 1
    }

    /// The text range of the entry whose `[[table]]` header spans `header`: up to the next
    /// table header written at the start of a line, or the end of the file.
    pub fn entry_range(&self, header: Range<usize>) -> Range<usize> {
        let from = header.end.min(self.text.len());
        let end = self.text[from..]
            .find("\n[")
            .map(|i| from + i + 1)
            .unwrap_or(self.text.len());
        header.start..end
    }

    /// The line where `key = ...` is written inside `span` (an entry), else the entry's first line.
    pub fn line_of_key(&self, span: &Range<usize>, key: &str) -> usize {
        let end = span.end.min(self.text.len());
        let start = span.start.min(end);
        let body = &self.text[start..end];
        let mut offset = start;
        for line in body.split_inclusive('\n') {
            let t = line.trim_start().trim_start_matches(['{', ',', ' ']);
            if let Some(rest) = t.strip_prefix(key)
                && rest.trim_start().starts_with('=')
            {
                return self.line_of(offset);
            }
            // Inline tables: `{ pka = 4.1, dh_kj_per_mol = ... }`.
            if let Some(i) = line
                .find(&format!(" {key} ="))
                .or_else(|| line.find(&format!("{{{key} =")))
                && !line.trim_start().starts_with('#')
            {
                return self.line_of(offset + i);
            }
            offset += line.len();
        }
        self.line_of(span.start)
    }

    /// The line of the `k`-th inline table in the array `key = [...]` inside `span`, else the
    /// line of `key`.
    pub fn line_of_item(&self, span: &Range<usize>, key: &str, k: usize) -> usize {
        let key_line = self.line_of_key(span, key);
        let end = span.end.min(self.text.len());
        // Byte offset where the key's line starts.
        let mut start = 0;
        for _ in 1..key_line {
            match self.text[start..].find('\n') {
                Some(i) => start += i + 1,
                None => break,
            }
        }
        let (mut depth, mut seen, mut in_str, mut in_comment) = (0usize, 0usize, false, false);
        for (i, c) in self.text[start.min(end)..end].char_indices() {
            match c {
                '\n' => in_comment = false,
                _ if in_comment => {}
                '"' => in_str = !in_str,
                _ if in_str => {}
                '#' => in_comment = true,
                '{' => {
                    if depth == 0 {
                        if seen == k {
                            return self.line_of(start + i);
                        }
                        seen += 1;
                    }
                    depth += 1;
                }
                '}' => depth = depth.saturating_sub(1),
                ']' if depth == 0 => break,
                _ => {}
            }
        }
        key_line
    }

    /// An error at `line` for `entry`'s `field`.
    pub fn error(&self, line: usize, entry: &str, field: &str, message: impl std::fmt::Display) -> Error {
        Error::CatalogFile(Box::new(CatalogFileError {
            file: self.file.to_string(),
            line,
            entry: entry.to_string(),
            field: field.to_string(),
            message: message.to_string(),
        }))
    }

    /// The error of a text that does not parse: at the line of the fault, else line 1.
    pub fn parse_error(&self, f: ParseFailure) -> Error {
        let line = f.at.map_or(1, |at| self.line_of(at));
        self.error(line, "", "", f.message)
    }
}
