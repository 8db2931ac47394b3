//! Dotted request field paths (`conditions.ph`, `requests[3].po2.value`),
//! built without allocation and rendered only when an error or warning needs
//! the text.

use std::fmt::{self, Write as _};

/// One step of a path: a field name, or a field name with a repeated index.
#[derive(Debug, Clone, Copy)]
enum Step {
    Field(&'static str),
    Indexed(&'static str, usize),
}

/// A path to a request field, as a chain of borrowed steps.
///
/// `FieldPath::ROOT.field("conditions").field("ph")` renders as
/// `conditions.ph`; `FieldPath::ROOT.indexed("requests", 3).field("po2")` as
/// `requests[3].po2`.
#[derive(Debug, Clone, Copy)]
pub struct FieldPath<'a> {
    parent: Option<&'a FieldPath<'a>>,
    step: Option<Step>,
}

impl<'a> FieldPath<'a> {
    /// The empty path: the request itself.
    pub const ROOT: FieldPath<'static> = FieldPath {
        parent: None,
        step: None,
    };

    /// The path of field `name` below this one.
    pub fn field(&'a self, name: &'static str) -> FieldPath<'a> {
        FieldPath {
            parent: Some(self),
            step: Some(Step::Field(name)),
        }
    }

    /// The path of item `index` of repeated field `name` below this one.
    pub fn indexed(&'a self, name: &'static str, index: usize) -> FieldPath<'a> {
        FieldPath {
            parent: Some(self),
            step: Some(Step::Indexed(name, index)),
        }
    }

    /// The rendered path (built by appending the steps, without the
    /// formatting machinery: it runs for every recorded input).
    pub fn render(&self) -> String {
        let mut out = String::with_capacity(32);
        self.append_to(&mut out);
        out
    }

    fn append_to(&self, out: &mut String) {
        if let Some(parent) = self.parent {
            parent.append_to(out);
        }
        let Some(step) = self.step else {
            return;
        };
        if !out.is_empty() {
            out.push('.');
        }
        match step {
            Step::Field(name) => out.push_str(name),
            Step::Indexed(name, index) => {
                // Writing to a String cannot fail.
                let _ = write!(out, "{name}[{index}]");
            }
        }
    }
}

impl fmt::Display for FieldPath<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.render())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_render_dotted_with_indices() {
        let root = FieldPath::ROOT;
        let item = root.indexed("requests", 3);
        let po2 = item.field("po2");
        assert_eq!(po2.field("value").render(), "requests[3].po2.value");
        let conditions = root.field("conditions");
        assert_eq!(conditions.field("ph").render(), "conditions.ph");
        assert_eq!(root.render(), "");
    }
}
