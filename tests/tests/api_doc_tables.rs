//! `proto/API.md`'s tables kept true against the code's own tables (issue
//! 18, finding 8): the hard limits (section 4), the status codes (section 6,
//! each provoked from a real server where a test can) and the standard
//! physiological ranges that grade warnings (section 5).

use oxbind_client::{
    code_name,
    v1::{
        dissociation_service_client::DissociationServiceClient, BatchSaturationFromTensionRequest,
        ListModelsRequest, ListModelsResponse, SampleCurveRequest, SaturationFromTensionRequest,
        WarningCode, WarningSeverity,
    },
};
use oxbind_service::{
    api::{limits, standard_ranges, status::STATUS_CODES, warnings::usual_severity},
    config::DEFAULT_MAX_BATCH_ITEMS,
    Config,
};
use oxbind_tests::{q, TestServer};
use tonic::Code;

const API_MD: &str = include_str!("../../proto/API.md");

/// The body rows of the first table after `heading` (up to the next
/// heading), each split into trimmed cells.
fn table_after(heading: &str) -> Vec<Vec<String>> {
    let start = API_MD
        .find(heading)
        .unwrap_or_else(|| panic!("API.md has no `{heading}`"));
    let section = &API_MD[start + heading.len()..];
    let end = section.find("\n#").unwrap_or(section.len());
    section[..end]
        .lines()
        .filter(|l| l.starts_with("| ") && !l.starts_with("| ---"))
        .skip(1) // the header row
        .map(|l| {
            l.trim_matches('|')
                .split(" | ")
                .map(|c| c.trim().to_owned())
                .collect()
        })
        .collect()
}

fn unquote(cell: &str) -> &str {
    cell.trim_matches('`')
}

#[test]
fn the_hard_limit_table_is_the_servers() {
    let rows = table_after("## 4. Hard limits");
    assert_eq!(
        rows.len(),
        limits::ALL.len() + 1,
        "one row per limit, and the batch size"
    );
    for (row, limit) in rows.iter().zip(limits::ALL) {
        assert_eq!(unquote(&row[0]), limit.input, "{row:?}");
        let fields: Vec<&str> = row[1].split(", ").map(unquote).collect();
        assert_eq!(fields, limit.fields, "{}", limit.input);
        assert!(
            row[2].starts_with(&format!("`{}`", limit.describe())),
            "{}: API.md says {}, the code {}",
            limit.input,
            row[2],
            limit.describe()
        );
        assert_eq!(unquote(&row[3]), limit.error_reason, "{}", limit.input);
        assert_eq!(row[4], limit.reason, "{}", limit.input);
    }
    let batch = rows.last().unwrap();
    assert_eq!(unquote(&batch[0]), "batch_items");
    assert!(
        batch[2].starts_with(&format!("`[1, {DEFAULT_MAX_BATCH_ITEMS}]`")),
        "{batch:?}"
    );
}

#[test]
fn the_status_code_table_is_the_servers() {
    let rows = table_after("### Status codes");
    let documented: Vec<&str> = rows.iter().map(|r| unquote(&r[0])).collect();
    let code_table: Vec<&str> = STATUS_CODES.iter().map(|(c, _)| code_name(*c)).collect();
    assert_eq!(documented, code_table);
}

#[test]
fn the_standard_range_table_is_the_servers() {
    let rows = table_after("Standard physiological ranges");
    let table = standard_ranges::table().expect("the compiled-in table parses");
    assert_eq!(rows.len(), table.len());
    for (row, range) in rows.iter().zip(table) {
        assert_eq!(
            unquote(&row[0]),
            oxbind_service::api::warnings::condition_field(range.condition)
        );
        assert_eq!(row[1].parse::<f64>().unwrap(), range.min, "{row:?}");
        assert_eq!(row[2].parse::<f64>().unwrap(), range.max, "{row:?}");
        assert_eq!(unquote(&row[3]), range.unit, "{row:?}");
        assert_eq!(row[4], range.source, "{row:?}");
    }
    // "Every code is always a caution except three" (API.md section 5):
    // two graded by the finding, whose usual severity is informational for
    // the condition and caution for the validation, and one always
    // informational.
    for code in all_warning_codes() {
        let caution = usual_severity(code) == WarningSeverity::Caution;
        assert_eq!(
            caution,
            !matches!(
                code,
                WarningCode::ConditionNotModelled | WarningCode::UncertaintyNotEvaluated
            ),
            "{code:?}"
        );
    }
}

/// Every warning code of the contract but the zero value.
fn all_warning_codes() -> Vec<WarningCode> {
    (1..).map_while(|n| WarningCode::try_from(n).ok()).collect()
}

#[test]
fn the_warning_table_lists_every_code() {
    // The code table (the standard ranges' table follows in the section).
    let rows = table_after("## 5. Warnings");
    let documented: Vec<&str> = rows
        .iter()
        .map(|r| unquote(&r[0]))
        .filter(|c| c.starts_with("WARNING_CODE_"))
        .collect();
    let codes: Vec<&str> = all_warning_codes()
        .into_iter()
        .map(|c| c.as_str_name())
        .collect();
    assert_eq!(documented, codes);
}

/// The code a call ended with.
fn code_of<T>(result: Result<tonic::Response<T>, tonic::Status>) -> Code {
    match result {
        Ok(_) => Code::Ok,
        Err(status) => status.code(),
    }
}

#[tokio::test]
async fn the_documented_codes_are_the_ones_a_server_answers_with() {
    let documented: Vec<Code> = STATUS_CODES.iter().map(|(c, _)| *c).collect();
    let mut seen = Vec::new();

    let server = TestServer::start().await;
    let channel = server.channel().await;
    let mut client = DissociationServiceClient::new(channel.clone());
    let good = SaturationFromTensionRequest {
        po2: q(80.0, "mm[Hg]"),
        ..Default::default()
    };
    seen.push(code_of(client.saturation_from_tension(good.clone()).await));
    seen.push(code_of(
        client
            .saturation_from_tension(SaturationFromTensionRequest {
                po2: q(-5.0, "mm[Hg]"),
                ..Default::default()
            })
            .await,
    ));
    // A method that is not one of the v1 RPCs.
    let mut grpc = tonic::client::Grpc::new(channel);
    grpc.ready().await.unwrap();
    let unknown = grpc
        .unary::<_, ListModelsResponse, _>(
            tonic::Request::new(ListModelsRequest {}),
            "/oxbind.v1.ModelCatalogService/ListModelz".parse().unwrap(),
            oxbind_proto::codec::ContiguousProstCodec::<ListModelsRequest, ListModelsResponse>::default(),
        )
        .await;
    seen.push(code_of(unknown));
    server.stop().await;

    // A request over the server's message size limit.
    let small = TestServer::start_with(Config {
        max_decoded_message_bytes: 256,
        ..Config::default()
    })
    .await;
    let mut client = DissociationServiceClient::new(small.channel().await);
    seen.push(code_of(
        client
            .batch_saturation_from_tension(BatchSaturationFromTensionRequest {
                requests: vec![good; 100],
                ..Default::default()
            })
            .await,
    ));
    small.stop().await;

    // A call that outlives the server's call timeout (ten 10,000-point
    // curves take far longer than a millisecond).
    let hurried = TestServer::start_with(Config {
        call_timeout: std::time::Duration::from_millis(1),
        ..Config::default()
    })
    .await;
    let mut client = DissociationServiceClient::new(hurried.channel().await);
    seen.push(code_of(
        client
            .sample_curve(SampleCurveRequest {
                condition_sets: vec![Default::default(); 10],
                point_count: 10_000,
                ..Default::default()
            })
            .await,
    ));
    hurried.stop().await;

    assert_eq!(
        seen,
        [
            Code::Ok,
            Code::InvalidArgument,
            Code::Unimplemented,
            Code::ResourceExhausted,
            Code::DeadlineExceeded
        ]
    );
    for code in seen {
        assert!(documented.contains(&code), "{code:?} is not documented");
    }
}

#[test]
fn the_uncertainty_profile_table_is_the_servers() {
    use oxbind_service::physiology::uncertainty::profiles::profiles;
    let rows = table_after("### Built-in profiles");
    let table = profiles().expect("the compiled-in table parses");
    assert_eq!(rows.len(), table.len());
    for (row, p) in rows.iter().zip(table) {
        assert_eq!(unquote(&row[0]), p.id, "{row:?}");
        assert_eq!(unquote(&row[1]), p.set, "{row:?}");
        assert_eq!(unquote(&row[2]), p.input.name(), "{row:?}");
        assert_eq!(unquote(&row[4]), p.verification.name(), "{row:?}");
    }
}
