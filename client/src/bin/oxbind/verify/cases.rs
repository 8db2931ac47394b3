//! Every check case, from the embedded source files: the shared vectors, the
//! engine's reference tables and the API reference's worked examples.

pub(crate) mod api_examples;
pub(crate) mod tables;
pub(crate) mod vectors;

use super::{
    case::CaseSet,
    sources::{API_REFERENCE_FILE, TABLE_FILES, VECTOR_FILES},
};

/// Every case of every source, in a fixed order: vectors, tables, then the
/// API reference's examples, each in file order.
pub(crate) fn all() -> CaseSet {
    let mut set = vectors::cases(VECTOR_FILES);
    set.extend(tables::cases(TABLE_FILES));
    set.extend(api_examples::cases(&API_REFERENCE_FILE));
    set
}

#[cfg(test)]
mod tests {
    use std::collections::BTreeSet;

    use super::*;

    #[test]
    fn case_ids_are_unique_and_every_case_names_its_source() {
        let set = all();
        assert!(set.problems.is_empty(), "{:#?}", set.problems);
        let mut ids = BTreeSet::new();
        for case in &set.cases {
            assert!(ids.insert(case.id.clone()), "duplicate case {}", case.id);
            assert!(!case.source.trim().is_empty(), "{} has no source", case.id);
        }
    }
}
