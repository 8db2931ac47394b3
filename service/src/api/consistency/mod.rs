//! `oxbind.v1.ConsistencyService`: internal-consistency checks of a
//! blood-gas sample, one transport-neutral function per RPC (see
//! [`super::dissociation`] for the pattern).
//!
//! Each request is read and validated ([`read`]), every check of the
//! engine's [`crate::physiology::consistency`] runs on the sample, and the
//! findings come back in the contract's shape ([`respond`]) with the
//! cautions, provenance and warnings. A sample is never refused for being
//! discordant; only bad input is refused.

mod figures;
mod read;
mod respond;

pub use figures::field_path;
pub use respond::{wire_check, wire_verdict};

use oxbind_proto::v1::{
    check_blood_gas_result, BatchCheckBloodGasRequest, BatchCheckBloodGasResponse,
    CheckBloodGasRequest, CheckBloodGasResponse, CheckBloodGasResult, Warning,
};

use super::{
    field_path::FieldPath,
    observe::{self, Observed},
    provenance,
    status::{batch_refusal, InvalidRequest, REASON_BATCH_EMPTY, REASON_BATCH_TOO_LARGE},
    warnings,
};
use crate::{
    instruments,
    physiology::{
        consistency::{check_sample, Check, Finding, Verdict, RULES_VERSION},
        error::Input,
        model::DissociationModel,
    },
};

/// The cautions every CheckBloodGas response carries.
pub const CONSISTENCY_CAUTIONS: &str = "Consistency findings support the laboratory's review of \
a result before it is released; they do not reject results. Local laboratory policy decides what \
happens to a discordant sample. The findings are decision support only: measured co-oximetry and \
licensed clinicians decide what a result means.";

/// Most items one BatchCheckBloodGas call takes (or the server's
/// `--max-batch-items`, when lower). Each answer carries every finding with
/// its causes and uncertainty, several kilobytes; 1,000 keep a batch's
/// answer well under the default 32 MiB message limit (our judgement).
pub const MAX_BATCH_ITEMS: usize = 1_000;

/// The full method name of the batch RPC (for the batch-size metric).
const BATCH_METHOD: &str = "oxbind.v1.ConsistencyService/BatchCheckBloodGas";

/// CheckBloodGas for one request.
pub fn compute_check_blood_gas(
    request: &CheckBloodGasRequest,
) -> Result<CheckBloodGasResponse, InvalidRequest> {
    check_blood_gas(request).inspect(Observed::observe)
}

/// BatchCheckBloodGas: at most [`MAX_BATCH_ITEMS`] items, or
/// `max_batch_items` when lower.
pub fn compute_batch_check_blood_gas(
    request: &BatchCheckBloodGasRequest,
    max_batch_items: usize,
) -> Result<BatchCheckBloodGasResponse, InvalidRequest> {
    let limit = max_batch_items.min(MAX_BATCH_ITEMS);
    let len = request.requests.len();
    if len == 0 {
        return Err(batch_refusal(
            REASON_BATCH_EMPTY,
            "requests must hold at least one item".to_owned(),
            limit,
        ));
    }
    if len > limit {
        return Err(batch_refusal(
            REASON_BATCH_TOO_LARGE,
            format!("requests holds more than the limit of {limit} items; split the batch"),
            limit,
        ));
    }
    instruments::record_batch_items(BATCH_METHOD, len as u64);
    let results = request
        .requests
        .iter()
        .enumerate()
        .map(|(index, item)| CheckBloodGasResult {
            result: Some(match compute_check_blood_gas(item) {
                Ok(response) => check_blood_gas_result::Result::Response(response),
                Err(refusal) => {
                    let refusal = refusal.within_item("requests", index);
                    observe::refused_item(&refusal);
                    check_blood_gas_result::Result::Error(refusal.to_rpc_status())
                }
            }),
        })
        .collect();
    Ok(BatchCheckBloodGasResponse { results })
}

fn check_blood_gas(
    request: &CheckBloodGasRequest,
) -> Result<CheckBloodGasResponse, InvalidRequest> {
    let read = read::read(request)?;
    let findings = check_sample(&read.sample, &read.settings);
    let (found, within_validated_range) = curve_warnings(&read, &findings);
    let model = read.settings.model;
    Ok(CheckBloodGasResponse {
        discordant_count: findings
            .iter()
            .filter(|f| f.verdict() == Verdict::Discordant)
            .count() as u32,
        findings: findings
            .iter()
            .map(|f| respond::finding(f, read.system))
            .collect(),
        cautions: CONSISTENCY_CAUTIONS.to_owned(),
        provenance: Some(provenance::for_model(
            model.info(),
            read.inputs_used,
            within_validated_range,
        )),
        warnings: found,
        rules_version: RULES_VERSION.to_owned(),
    })
}

/// The warnings about the saturations calculated from PO2 (conditions the
/// model ignores, inputs outside its validated ranges), when a finding used
/// one, and whether every input lay inside those ranges.
fn curve_warnings(read: &read::ReadRequest, findings: &[Finding]) -> (Vec<Warning>, bool) {
    let evaluated = |check: Check| {
        findings
            .iter()
            .any(|f| f.check == check && f.evaluated().is_some())
    };
    let calculated = evaluated(Check::MeasuredSaturation)
        || evaluated(Check::RoomAirExposure)
        || (evaluated(Check::VenousPattern) && read.sample.so2.is_none());
    let mut found = Vec::new();
    if !calculated {
        return (found, true);
    }
    let Ok(at_37) = read.sample.at_37() else {
        return (found, true);
    };
    let model = &read.settings.model;
    let conditions = read.sample.curve_conditions(&at_37);
    let sample_path = FieldPath::ROOT.field("sample");
    warnings::unmodelled_conditions(model, &conditions, &sample_path, &mut found);
    let po2_path = sample_path.field("po2");
    let inside = warnings::validated_ranges(
        model,
        &conditions,
        &sample_path,
        &[(Input::Po2, at_37.po2_mmhg, &po2_path)],
        &mut found,
    );
    (found, inside)
}

impl Observed for CheckBloodGasResponse {
    fn observe(&self) {
        observe::result(self.provenance.as_ref(), &self.warnings);
    }
}
