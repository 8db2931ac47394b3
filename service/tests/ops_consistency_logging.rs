//! ConsistencyService leaves no patient value in the server's output at info
//! level (the default): the built server is started, sent one sample that is
//! checked, one that is refused and a batch, stopped with SIGTERM, and
//! everything it printed is scanned for the values sent and the values it
//! computed (as ops_telemetry.rs does for the dissociation RPCs).

use std::{
    io::{BufRead, BufReader, Read},
    process::{Command, Stdio},
    sync::{Arc, Mutex},
};

use nix::{
    sys::signal::{kill, Signal},
    unistd::Pid,
};
use oxbind_client::{
    v1::{BloodGasResults, BloodGasSampleType, CheckBloodGasRequest, Quantity},
    OxbindClient,
};

/// Distinctive inputs of an invented patient, which must never be printed.
const PO2_MMHG: f64 = 57.318_246_1;
const PCO2_MMHG: f64 = 44.716_283_9;
const PH: f64 = 7.347_612_5;
const SPO2: f64 = 0.938_164_27;
const SO2: f64 = 0.872_643_91;
const BAD_PH: f64 = 9.614_273_8;

fn quantity(value: f64, unit: &str) -> Option<Quantity> {
    Some(Quantity {
        value,
        unit: unit.to_owned(),
    })
}

fn sample(ph: f64) -> CheckBloodGasRequest {
    CheckBloodGasRequest {
        sample: Some(BloodGasResults {
            po2: quantity(PO2_MMHG, "mm[Hg]"),
            pco2: quantity(PCO2_MMHG, "mm[Hg]"),
            ph: Some(ph),
            sample_type: BloodGasSampleType::Arterial as i32,
            so2_fraction: Some(SO2),
            spo2_fraction: Some(SPO2),
            fio2: quantity(0.28, "1"),
            ..Default::default()
        }),
        ..Default::default()
    }
}

fn collect(
    stream: impl Read + Send + 'static,
    into: Arc<Mutex<Vec<String>>>,
) -> std::thread::JoinHandle<()> {
    std::thread::spawn(move || {
        for line in BufReader::new(stream).lines() {
            let Ok(line) = line else { break };
            into.lock().unwrap().push(line);
        }
    })
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn no_patient_value_reaches_the_logs_at_info_level() {
    let mut child = Command::new(env!("CARGO_BIN_EXE_oxbind-server"))
        .args(["--listen", "127.0.0.1:0", "--log-format", "json"])
        .env_remove("OXBIND_LISTEN")
        .env_remove("OXBIND_LOG_FILTER")
        .env_remove("OTEL_EXPORTER_OTLP_ENDPOINT")
        .env_remove("OTEL_EXPORTER_OTLP_TRACES_ENDPOINT")
        .env_remove("OTEL_EXPORTER_OTLP_METRICS_ENDPOINT")
        .stderr(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .expect("start oxbind-server");
    let printed = Arc::new(Mutex::new(Vec::<String>::new()));
    let out_thread = collect(child.stdout.take().unwrap(), printed.clone());
    let mut stderr = BufReader::new(child.stderr.take().unwrap()).lines();
    let address = loop {
        let line = stderr.next().expect("serving before exit").expect("line");
        printed.lock().unwrap().push(line.clone());
        let Ok(event) = serde_json::from_str::<serde_json::Value>(&line) else {
            continue;
        };
        if event["message"] == "serving" {
            break event["address"].as_str().unwrap().to_owned();
        }
    };
    let err_printed = printed.clone();
    let err_thread = std::thread::spawn(move || {
        for line in stderr {
            let Ok(line) = line else { break };
            err_printed.lock().unwrap().push(line);
        }
    });

    let client = OxbindClient::connect(format!("http://{address}"))
        .await
        .expect("connect");
    let checked = client.check_blood_gas(sample(PH)).await.expect("checked");
    let refused = client.check_blood_gas(sample(BAD_PH)).await.unwrap_err();
    assert_eq!(refused.code(), oxbind_client::Code::InvalidArgument);
    let batch = client
        .batch_check_blood_gas(vec![sample(PH), sample(BAD_PH)])
        .await
        .expect("batch answered");
    assert!(batch[0].is_ok() && batch[1].is_err());
    drop(client);

    kill(Pid::from_raw(child.id() as i32), Signal::SIGTERM).unwrap();
    let exit = tokio::task::spawn_blocking(move || child.wait())
        .await
        .unwrap()
        .unwrap();
    assert_eq!(exit.code(), Some(0), "{exit:?}");
    out_thread.join().unwrap();
    err_thread.join().unwrap();

    let printed = printed.lock().unwrap().clone();
    // The calls were logged (method and status), so the scan saw them.
    let methods: Vec<String> = printed
        .iter()
        .filter_map(|l| serde_json::from_str::<serde_json::Value>(l).ok())
        .filter(|e| e["message"] == "call")
        .filter_map(|e| e["method"].as_str().map(str::to_owned))
        .collect();
    assert!(methods.contains(&"oxbind.v1.ConsistencyService/CheckBloodGas".to_owned()));
    assert!(methods.contains(&"oxbind.v1.ConsistencyService/BatchCheckBloodGas".to_owned()));

    // The leading figures of each value, cut rather than rounded, so that a
    // value printed at any precision from about six figures up is caught.
    let leading = |v: f64| format!("{v:.12}")[..8].to_owned();
    let mut forbidden: Vec<String> = [PO2_MMHG, PCO2_MMHG, PH, SPO2, SO2, BAD_PH]
        .into_iter()
        .map(leading)
        .collect();
    for finding in &checked.findings {
        for q in [&finding.statistic, &finding.observed, &finding.reference]
            .into_iter()
            .flatten()
        {
            if q.value.abs() > 1e-3 {
                forbidden.push(leading(q.value));
            }
        }
    }
    for value in &forbidden {
        for line in &printed {
            assert!(
                !line.contains(value.as_str()),
                "the server printed {value}: {line}"
            );
        }
    }
}
