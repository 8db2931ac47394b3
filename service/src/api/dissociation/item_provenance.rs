//! Where a computed item's provenance goes: on the item, or in a list the
//! batch answer shares (`ProvenancePlacement`).

use oxbind_proto::v1::{InputUsed, ProvenancePlacement};

use super::super::{
    field_path::FieldPath,
    provenance,
    reader::RequestReader,
    status::{InvalidRequest, Violation},
};
use crate::physiology::model::ModelInfo;

/// The placement a batch asked for (its raw enum value), with an empty shared
/// list; an unknown value refuses the batch.
pub(super) fn batch_placement(
    raw: i32,
) -> Result<(ItemProvenance, SharedProvenance), InvalidRequest> {
    let placement = match ProvenancePlacement::try_from(raw) {
        Ok(ProvenancePlacement::Shared) => ItemProvenance::Shared,
        Ok(ProvenancePlacement::Unspecified | ProvenancePlacement::EachItem) => {
            ItemProvenance::Full
        }
        Err(_) => {
            return Err(InvalidRequest::one(Violation::other(
                &FieldPath::ROOT.field("provenance_placement"),
                super::super::status::REASON_UNKNOWN_ENUM,
                "not a known oxbind.v1.ProvenancePlacement value",
            )))
        }
    };
    Ok((placement, SharedProvenance::default()))
}

/// Whether a computed item carries its own full provenance or shares one.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum ItemProvenance {
    /// Full provenance, inputs_used included, on the item.
    Full,
    /// No provenance on the item; it names a shared entry.
    Shared,
}

impl ItemProvenance {
    /// The request reader this placement needs (recording inputs only when
    /// they are reported).
    pub(super) fn reader(self, raw_unit_system: i32) -> RequestReader {
        match self {
            Self::Full => RequestReader::new(raw_unit_system),
            Self::Shared => RequestReader::without_inputs_used(raw_unit_system),
        }
    }

    /// The provenance the item's response carries.
    pub(super) fn item_provenance(
        self,
        key: &ProvenanceKey,
        inputs_used: Vec<InputUsed>,
    ) -> Option<oxbind_proto::v1::Provenance> {
        match self {
            Self::Full => Some(provenance::for_model(
                key.model,
                inputs_used,
                key.within_validated_range,
            )),
            Self::Shared => None,
        }
    }
}

/// What tells one shared provenance entry from another.
#[derive(Debug, Clone, Copy)]
pub(super) struct ProvenanceKey {
    pub(super) model: &'static ModelInfo,
    pub(super) within_validated_range: bool,
}

/// The shared provenance entries of one batch answer, in order of first use.
#[derive(Debug, Default)]
pub(super) struct SharedProvenance {
    entries: Vec<oxbind_proto::v1::Provenance>,
}

impl SharedProvenance {
    /// The index of `key`'s entry (added on first use) under `placement`;
    /// 0 when items carry their own provenance.
    pub(super) fn index_for(&mut self, placement: ItemProvenance, key: &ProvenanceKey) -> u32 {
        if placement == ItemProvenance::Full {
            return 0;
        }
        let index = match self.entries.iter().position(|entry| {
            entry.model_id == key.model.id
                && entry.within_validated_range == key.within_validated_range
        }) {
            Some(index) => index,
            None => {
                self.entries.push(provenance::for_model(
                    key.model,
                    Vec::new(),
                    key.within_validated_range,
                ));
                self.entries.len() - 1
            }
        };
        // At most two entries per model in the catalog: the cast cannot
        // truncate.
        index as u32
    }

    pub(super) fn into_entries(self) -> Vec<oxbind_proto::v1::Provenance> {
        self.entries
    }
}
