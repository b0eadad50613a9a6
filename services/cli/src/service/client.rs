//! The client commands: `submit`, `watch`, `fetch` (TLS, token, retries, confined writes).

use super::*;

type Client = ScreeningClient<tonic::service::interceptor::InterceptedService<tonic::transport::Channel, Bearer>>;

pub(super) fn read_pem(path: &std::path::Path, what: &str) -> anyhow::Result<Vec<u8>> {
    std::fs::read(path).with_context(|| format!("reading {what} {}", path.display()))
}

/// The token from --token-file, else from THERMOSIEVE_TOKEN; none when neither is set.
pub(super) fn bearer(a: &FrontArgs) -> anyhow::Result<Bearer> {
    let token = match &a.token_file {
        Some(p) => Some(
            std::fs::read_to_string(p)
                .with_context(|| format!("reading the token file {}", p.display()))?
                .trim()
                .to_string(),
        ),
        None => std::env::var("THERMOSIEVE_TOKEN").ok().map(|t| t.trim().to_string()),
    };
    Bearer::new(token.as_deref().filter(|t| !t.is_empty())).map_err(|e| Usage(e.to_string()).into())
}

pub(super) async fn client(a: &FrontArgs) -> anyhow::Result<Client> {
    let front = &a.front;
    let mut endpoint = tonic::transport::Endpoint::from_shared(front.clone()).map_err(|e| Usage(format!("--front {front:?}: {e}")))?;
    if front.starts_with("https://") {
        let Some(ca) = &a.tls_ca else {
            return Err(Usage(format!(
                "--front {front}: https needs --tls-ca (THERMOSIEVE_TLS_CA), the CA that signed the front's certificate"
            ))
            .into());
        };
        let mut tls = tonic::transport::ClientTlsConfig::new()
            .ca_certificate(tonic::transport::Certificate::from_pem(read_pem(ca, "the CA certificate")?));
        if let (Some(cert), Some(key)) = (&a.tls_client_cert, &a.tls_client_key) {
            tls = tls.identity(tonic::transport::Identity::from_pem(
                read_pem(cert, "the client certificate")?,
                read_pem(key, "the client key")?,
            ));
        }
        endpoint = endpoint.tls_config(tls).context("TLS settings")?;
    } else if a.tls_ca.is_some() || a.tls_client_cert.is_some() {
        return Err(Usage(format!("--front {front}: TLS settings given, but the address is not https://")).into());
    }
    let channel = endpoint
        .connect()
        .await
        .with_context(|| format!("connecting to the front at {front} (THERMOSIEVE_FRONT)"))?;
    Ok(ScreeningClient::with_interceptor(channel, bearer(a)?).max_decoding_message_size(64 << 20))
}

pub(super) fn status_error(what: &str, s: tonic::Status) -> anyhow::Error {
    match s.code() {
        tonic::Code::InvalidArgument | tonic::Code::NotFound | tonic::Code::Unauthenticated => {
            Usage(format!("{what}: {}", s.message())).into()
        }
        _ => anyhow::anyhow!("{what}: {} ({:?})", s.message(), s.code()),
    }
}

pub(super) async fn submit(a: SubmitArgs) -> anyhow::Result<()> {
    let cases = open_input(&a.input, &a.format)?;
    let mut c = client(&a.front).await?;
    let header = pb::BatchHeader {
        temperatures_k: a.temperatures_k.unwrap_or_default(),
        default_conditions: None,
        chunk_size: a.chunk_size,
        label: a.label,
    };
    let (tx, rx) = tokio::sync::mpsc::channel::<pb::SubmitBatchRequest>(256);
    // Reading the file is blocking I/O: a thread of its own feeds the stream.
    let reader = tokio::task::spawn_blocking(move || {
        if tx
            .blocking_send(pb::SubmitBatchRequest {
                item: Some(pb::submit_batch_request::Item::Header(header)),
            })
            .is_err()
        {
            return;
        }
        for message in thermosieve_cli::submit::case_messages(cases) {
            if tx.blocking_send(message).is_err() {
                return;
            }
        }
    });
    let r = c
        .submit_batch(tokio_stream::wrappers::ReceiverStream::new(rx))
        .await
        .map_err(|s| status_error("submit", s))?
        .into_inner();
    let _ = reader.await;
    eprintln!(
        "submitted {} cases ({} input errors) in {} chunks",
        r.cases_received, r.input_errors, r.chunks
    );
    eprintln!("caution: {}", thermosieve_engine::CAUTION);
    println!("{}", r.batch_id);
    Ok(())
}

pub(super) fn state_name(s: i32) -> &'static str {
    match pb::BatchState::try_from(s) {
        Ok(pb::BatchState::Receiving) => "receiving",
        Ok(pb::BatchState::Running) => "running",
        Ok(pb::BatchState::Finalizing) => "finalizing",
        Ok(pb::BatchState::Done) => "done",
        Ok(pb::BatchState::Failed) => "failed",
        Ok(pb::BatchState::Cancelled) => "cancelled",
        _ => "unknown",
    }
}

/// How long `watch` keeps trying while the front or its queue is unavailable.
pub(super) const WATCH_OUTAGE_LIMIT: Duration = Duration::from_secs(600);

pub(super) async fn watch(a: WatchArgs) -> anyhow::Result<()> {
    let mut c = client(&a.front).await?;
    let bar = ProgressBar::new(0);
    bar.set_style(
        ProgressStyle::with_template("{spinner} {msg:>10} [{bar:40}] {pos}/{len} cases  {per_sec}  eta {eta}")
            .unwrap_or_else(|_| ProgressStyle::default_bar())
            .progress_chars("=> "),
    );
    let mut last: Option<pb::BatchStatus> = None;
    // A front restarting or a queue briefly gone (UNAVAILABLE) is waited out with backoff, up
    // to WATCH_OUTAGE_LIMIT; any other error ends the watch.
    let mut outage: Option<std::time::Instant> = None;
    let mut backoff = Duration::from_millis(250);
    loop {
        let r = async {
            let mut stream = c
                .watch_batch(pb::WatchBatchRequest {
                    batch_id: a.batch_id.clone(),
                })
                .await?
                .into_inner();
            while let Some(s) = stream.message().await? {
                outage = None;
                bar.set_length(s.cases_total);
                bar.set_position(s.cases_done);
                bar.set_message(state_name(s.state));
                last = Some(s);
            }
            Ok::<(), tonic::Status>(())
        }
        .await;
        match r {
            Ok(()) => break,
            Err(s) if s.code() == tonic::Code::Unavailable => {
                let since = *outage.get_or_insert_with(std::time::Instant::now);
                if since.elapsed() > WATCH_OUTAGE_LIMIT {
                    return Err(status_error("watch", s));
                }
                bar.set_message("waiting");
                tracing::warn!(error = s.message(), "the front is unavailable; watching again shortly");
                tokio::time::sleep(backoff).await;
                backoff = (backoff * 2).min(Duration::from_secs(5));
            }
            Err(s) => return Err(status_error("watch", s)),
        }
    }
    bar.finish();
    let Some(s) = last else {
        bail!("the front ended the watch without a status")
    };
    println!(
        "batch {}: {} — {} cases, {} errors, {} chunks dead-lettered, {:.1} s{}",
        s.batch_id,
        state_name(s.state),
        s.cases_done,
        s.cases_error,
        s.chunks_dead_lettered,
        s.elapsed_seconds,
        if s.message.is_empty() {
            String::new()
        } else {
            format!(" ({})", s.message)
        }
    );
    println!("caution: {}", thermosieve_engine::CAUTION);
    if s.state != pb::BatchState::Done as i32 {
        return Err(BatchEnded(format!("batch {} ended {}", s.batch_id, state_name(s.state))).into());
    }
    Ok(())
}

/// A file being fetched: removed when dropped unless it was completed.
pub(super) struct Partial(PathBuf);

impl Drop for Partial {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.0);
    }
}

pub(super) async fn fetch(a: FetchArgs) -> anyhow::Result<()> {
    let mut c = client(&a.front).await?;
    std::fs::create_dir_all(&a.out).with_context(|| format!("creating {}", a.out.display()))?;
    // Only these names are written, only inside --out: the name the front sends is checked, never used.
    for (table, name) in Table::ALL.map(|t| (convert::table_to_pb(t), t.file_name())) {
        let mut stream = c
            .fetch_table(pb::FetchTableRequest {
                batch_id: a.batch_id.clone(),
                table: table as i32,
            })
            .await
            .map_err(|s| status_error("fetch", s))?
            .into_inner();
        // Streamed to a temp file, renamed when complete: memory stays at one message.
        let tmp = Partial(a.out.join(format!(".fetch-{name}-{}.part", std::process::id())));
        let mut file = std::io::BufWriter::new(std::fs::File::create(&tmp.0).with_context(|| format!("writing {}", tmp.0.display()))?);
        let mut written = 0u64;
        let mut total = None;
        while let Some(chunk) = stream.message().await.map_err(|s| status_error("fetch", s))? {
            if chunk.file_name != name {
                bail!("fetch {name}: the front sent the file name {:?}; refusing it", chunk.file_name);
            }
            if chunk.offset != written || total.is_some_and(|t| t != chunk.total_bytes) {
                bail!(
                    "fetch {name}: the front sent bytes at offset {} of {} when {written} of {} had arrived",
                    chunk.offset,
                    chunk.total_bytes,
                    total.unwrap_or(chunk.total_bytes)
                );
            }
            total = Some(chunk.total_bytes);
            std::io::Write::write_all(&mut file, &chunk.data).with_context(|| format!("writing {}", tmp.0.display()))?;
            written += chunk.data.len() as u64;
        }
        std::io::Write::flush(&mut file).with_context(|| format!("writing {}", tmp.0.display()))?;
        drop(file);
        match total {
            None => bail!("the front sent no data for {name}"),
            Some(t) if t != written => bail!("fetch {name}: {written} bytes arrived of the {t} announced"),
            Some(_) => {}
        }
        let path = a.out.join(name);
        std::fs::rename(&tmp.0, &path).with_context(|| format!("writing {}", path.display()))?;
        println!("{} ({written} bytes)", path.display());
    }
    println!("caution: {}", thermosieve_engine::CAUTION);
    Ok(())
}
