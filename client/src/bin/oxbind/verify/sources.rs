//! The check-case source files, embedded at build time from where the tests
//! read them (client/build.rs names each file for `include_str!`).

/// One embedded source file.
#[derive(Debug, Clone, Copy)]
pub(crate) struct EmbeddedFile {
    /// Its path from the workspace root, e.g. `tests/vectors/dissociation.json`.
    pub(crate) path: &'static str,
    /// Its text, as it was at build time.
    pub(crate) text: &'static str,
}

include!(concat!(env!("OUT_DIR"), "/verify_sources.rs"));

/// Every embedded file, in a fixed order: vectors, tables, the API
/// reference, the FHIR door's codes.
pub(crate) fn all() -> impl Iterator<Item = &'static EmbeddedFile> {
    VECTOR_FILES
        .iter()
        .chain(TABLE_FILES.iter())
        .chain([&API_REFERENCE_FILE, &FHIR_CODES_FILE])
}
