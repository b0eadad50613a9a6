//! Who may reach the front: TLS with client certificates and bearer tokens on a real front over
//! loopback, each token a tenant that sees only its own batches.

use super::*;
use rcgen::{BasicConstraints, CertificateParams, CertifiedIssuer, IsCa, KeyPair};
use thermosieve_front::auth::{Bearer, Tokens};
use thermosieve_front::Access;
use tonic::transport::{Certificate, Channel, ClientTlsConfig, Identity, ServerTlsConfig};

const TOKENS: &str = "# test tenants\nplant-a tok-a-0123456789abcdef\nplant-b tok-b-fedcba9876543210\n";

/// A CA, the front's certificate for `localhost`, and a client certificate, all made here.
struct Pki {
    ca_pem: String,
    server: (String, String),
    client: (String, String),
}

fn pki() -> Pki {
    let mut ca_params = CertificateParams::new(Vec::<String>::new()).unwrap();
    ca_params.is_ca = IsCa::Ca(BasicConstraints::Unconstrained);
    let ca = CertifiedIssuer::self_signed(ca_params, KeyPair::generate().unwrap()).unwrap();
    let leaf = |name: &str| {
        let key = KeyPair::generate().unwrap();
        let cert = CertificateParams::new(vec![name.to_string()])
            .unwrap()
            .signed_by(&key, &*ca)
            .unwrap();
        (cert.pem(), key.serialize_pem())
    };
    Pki {
        ca_pem: ca.pem(),
        server: leaf("localhost"),
        client: leaf("route-dev-client"),
    }
}

async fn channel(addr: std::net::SocketAddr, pki: &Pki, with_client_cert: bool) -> Result<Channel, tonic::transport::Error> {
    let mut tls = ClientTlsConfig::new()
        .ca_certificate(Certificate::from_pem(&pki.ca_pem))
        .domain_name("localhost");
    if with_client_cert {
        tls = tls.identity(Identity::from_pem(&pki.client.0, &pki.client.1));
    }
    Channel::from_shared(format!("https://{addr}"))
        .unwrap()
        .tls_config(tls)?
        .connect()
        .await
}

type Authed = ScreeningClient<tonic::service::interceptor::InterceptedService<Channel, Bearer>>;

fn with_token(channel: Channel, token: Option<&str>) -> Authed {
    ScreeningClient::with_interceptor(channel, Bearer::new(token).unwrap())
}

fn water_request() -> Vec<pb::SubmitBatchRequest> {
    vec![
        pb::SubmitBatchRequest {
            item: Some(pb::submit_batch_request::Item::Header(pb::BatchHeader::default())),
        },
        pb::SubmitBatchRequest {
            item: Some(pb::submit_batch_request::Item::Case(pb::Case {
                case_id: "h2-burn".into(),
                reaction: "2 H2(g) + O2(g) -> 2 H2O(l)".into(),
                ..Default::default()
            })),
        },
    ]
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_tls_front_with_tokens_serves_each_tenant_only_its_own_batches() {
    let pki = pki();
    let tls = ServerTlsConfig::new()
        .identity(Identity::from_pem(&pki.server.0, &pki.server.1))
        .client_ca_root(Certificate::from_pem(&pki.ca_pem));
    let access = Access {
        tls: Some(tls),
        tokens: Some(Tokens::parse(TOKENS, "test tokens").unwrap()),
    };
    let svc = Service::start_with(1, |_| {}, access, RedisServer::start(), |_| {}).await;

    // Plain HTTP/2 to a TLS front gets nowhere.
    let mut plain = ScreeningClient::connect(format!("http://{}", svc.addr)).await.unwrap();
    assert!(plain.submit_batch(tokio_stream::iter(water_request())).await.is_err());
    // TLS without the client certificate the front requires: refused in the handshake.
    let no_cert = match channel(svc.addr, &pki, false).await {
        Err(_) => true,
        Ok(c) => with_token(c, Some("tok-a-0123456789abcdef"))
            .submit_batch(tokio_stream::iter(water_request()))
            .await
            .is_err(),
    };
    assert!(no_cert, "a client without a certificate was served");

    let ch = channel(svc.addr, &pki, true).await.expect("TLS with a client certificate");
    // Health answers without a token (probes); the API does not.
    let mut health = tonic_health::pb::health_client::HealthClient::new(ch.clone());
    let h = health
        .check(tonic_health::pb::HealthCheckRequest { service: String::new() })
        .await
        .expect("health without a token")
        .into_inner();
    assert_eq!(h.status, tonic_health::pb::health_check_response::ServingStatus::Serving as i32);
    for token in [None, Some("tok-a-0123456789abcdeX"), Some("plant-a")] {
        let e = with_token(ch.clone(), token)
            .submit_batch(tokio_stream::iter(water_request()))
            .await
            .unwrap_err();
        assert_eq!(e.code(), tonic::Code::Unauthenticated, "{token:?}: {e}");
    }

    let mut a = with_token(ch.clone(), Some("tok-a-0123456789abcdef"));
    let mut b = with_token(ch.clone(), Some("tok-b-fedcba9876543210"));
    let id = a
        .submit_batch(tokio_stream::iter(water_request()))
        .await
        .expect("tenant a submits")
        .into_inner()
        .batch_id;
    let deadline = tokio::time::Instant::now() + Duration::from_secs(60);
    loop {
        let s = a
            .get_batch_status(pb::GetBatchStatusRequest { batch_id: id.clone() })
            .await
            .expect("tenant a sees its batch")
            .into_inner();
        if s.state == pb::BatchState::Done as i32 {
            break;
        }
        assert!(tokio::time::Instant::now() < deadline, "batch not done in 60 s: {s:?}");
        tokio::time::sleep(Duration::from_millis(100)).await;
    }

    // Tenant b learns nothing: every call on a's batch is NOT_FOUND, worded as for an id that
    // never existed.
    let unknown = "0123456789abcdef0123456789abcdef".to_string();
    let never = b
        .get_batch_status(pb::GetBatchStatusRequest { batch_id: unknown.clone() })
        .await
        .unwrap_err();
    let foreign = b
        .get_batch_status(pb::GetBatchStatusRequest { batch_id: id.clone() })
        .await
        .unwrap_err();
    assert_eq!(foreign.code(), tonic::Code::NotFound);
    assert_eq!(foreign.message().replace(&id, "ID"), never.message().replace(&unknown, "ID"));
    assert_eq!(
        b.watch_batch(pb::WatchBatchRequest { batch_id: id.clone() })
            .await
            .unwrap_err()
            .code(),
        tonic::Code::NotFound
    );
    assert_eq!(
        b.fetch_table(pb::FetchTableRequest {
            batch_id: id.clone(),
            table: pb::Table::Cases as i32,
        })
        .await
        .unwrap_err()
        .code(),
        tonic::Code::NotFound
    );
    assert_eq!(
        b.cancel_batch(pb::CancelBatchRequest { batch_id: id.clone() })
            .await
            .unwrap_err()
            .code(),
        tonic::Code::NotFound
    );

    // Tenant a fetches its table through TLS, and it holds the real answer (b's cancel did
    // nothing). 2 ΔfH°(H2O, l) = 2 × −285.830 kJ/mol (CODATA Key Values for Thermodynamics,
    // Cox, Wagman & Medvedev 1989).
    let mut stream = a
        .fetch_table(pb::FetchTableRequest {
            batch_id: id.clone(),
            table: pb::Table::Cases as i32,
        })
        .await
        .expect("tenant a fetches")
        .into_inner();
    let mut bytes = Vec::new();
    while let Some(m) = stream.message().await.unwrap() {
        bytes.extend_from_slice(&m.data);
    }
    let cases = read_table_bytes(bytes);
    assert_eq!(strings(&cases, "status"), vec![Some("ok".to_string())]);
    let dh = floats(&cases, "delta_h_298_kj_per_mol")[0].unwrap();
    assert!((dh - (-571.66)).abs() < 0.5, "{dh}");
    svc.stop().await;
}
