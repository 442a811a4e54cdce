//! What was just done, said on the page a form goes back to: a delete or a re-import redirects with
//! `?done=<code>&what=<name>` and the page shows the sentence for that code (`Done::message`). Only
//! the codes below make a sentence; the name is the record's own, escaped like every user text.

use serde::Deserialize;

/// The query a page reads its message from.
#[derive(Deserialize, Default)]
pub struct DoneQuery {
    done: Option<String>,
    what: Option<String>,
}

/// A thing done: its code and the record's name.
pub struct Done {
    pub kind: &'static str,
    pub what: String,
}

impl Done {
    /// The redirect's query string, the name percent-encoded.
    pub fn query(&self) -> String {
        format!("done={}&what={}", self.kind, encode(&self.what))
    }

    /// The sentence for a page's query, `None` without one or for an unknown code.
    pub fn message(q: &DoneQuery) -> Option<String> {
        let what = q.what.as_deref().unwrap_or("").trim();
        let quoted = |w: &str| if w.is_empty() { String::new() } else { format!(" \u{201c}{w}\u{201d}") };
        Some(match q.done.as_deref()? {
            "compressor-deleted" => format!(
                "Compressor{} removed, with its logged readings; the figures are being worked out again.",
                quoted(what)
            ),
            "receiver-deleted" => format!("Receiver{} removed; the system volume no longer counts it.", quoted(what)),
            "upload-deleted" => format!(
                "The file{} was deleted with its readings; the figures are being worked out again from the other files.",
                quoted(what)
            ),
            "upload-remapped" => format!(
                "The file{} was read again with the corrected mapping, in place of its earlier import; the figures are being worked out again.",
                quoted(what)
            ),
            "test-deleted" if !what.is_empty() => {
                format!("The {what} was deleted; the leak estimate no longer counts it.")
            }
            "test-deleted" => "The field test was deleted; the leak estimate no longer counts it.".into(),
            "audit-deleted" => format!(
                "The audit{} was deleted with its files, readings, tests, scenarios and records.",
                quoted(what)
            ),
            "scenario-deleted" => format!("Scenario{} deleted.", quoted(what)),
            "scenario-renamed" => format!("Scenario renamed{}.", if what.is_empty() { String::new() } else { format!(" to{}", quoted(what)) }),
            _ => return None,
        })
    }
}

/// Percent-encoding of a query value (RFC 3986: everything but the unreserved characters).
fn encode(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for b in s.bytes() {
        if b.is_ascii_alphanumeric() || matches!(b, b'-' | b'_' | b'.' | b'~') {
            out.push(b as char);
        } else {
            out.push_str(&format!("%{b:02X}"));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_name_goes_through_the_query_and_unknown_codes_say_nothing() {
        let d = Done { kind: "upload-deleted", what: "day 1 & 2.csv".into() };
        // RFC 3986: a space is %20 and & is %26.
        assert_eq!(d.query(), "done=upload-deleted&what=day%201%20%26%202.csv");
        let q = DoneQuery { done: Some("upload-deleted".into()), what: Some("day 1 & 2.csv".into()) };
        assert!(Done::message(&q).unwrap().starts_with("The file \u{201c}day 1 & 2.csv\u{201d} was deleted"));
        let q = DoneQuery { done: Some("<script>".into()), what: Some("x".into()) };
        assert_eq!(Done::message(&q), None);
    }
}
