//! The Redis Streams backend.
//!
//! Keys (prefix `P`, default `thermosieve`):
//! - `P:tasks`: the stream of tasks, one entry per chunk or finalize task (field `task`, JSON),
//!   read by consumer group `workers`. An entry is deleted (XDEL) only after it is acknowledged:
//!   trimming with MAXLEN could delete entries still pending.
//! - `P:dead`: the dead-letter stream (capped at about 10,000 entries).
//! - `P:batch:<id>`: a hash with the batch's spec (JSON), state, message and counters.
//! - `P:batch:<id>:done`: the set of chunk numbers committed, so a chunk computed twice counts once.
//!
//! State changes that touch several keys run as Lua scripts, so they are atomic. Blocking reads
//! (XREADGROUP BLOCK) each get a connection of their own, with a response timeout above the
//! block time; other calls share one multiplexed connection.
//!
//! Without persistence a Redis restart loses the stream, the group and the batch hashes: reads
//! then fail with NOGROUP, which becomes [`QueueError::GroupMissing`] (logged loudly by the
//! worker), and batches in flight report as unknown, never as complete.

use crate::delivery::*;
use crate::{Queue, QueueError};
use redis::aio::{ConnectionManager, ConnectionManagerConfig, MultiplexedConnection};
use redis::streams::{StreamAutoClaimReply, StreamId, StreamPendingCountReply, StreamReadReply};
use redis::{AsyncConnectionConfig, Script, Value};
use std::collections::HashMap;
use std::sync::Mutex;
use std::time::Duration;
use thermosieve_model::*;

/// The JSON of `Task::Chunk(chunk)`, made from a borrowed chunk (no copy of its cases).
fn chunk_payload(chunk: &Chunk) -> serde_json::Result<String> {
    #[derive(serde::Serialize)]
    #[serde(rename_all = "snake_case")]
    enum TaskRef<'a> {
        Chunk(&'a Chunk),
    }
    serde_json::to_string(&TaskRef::Chunk(chunk))
}

/// Consumer group of the workers.
pub const GROUP: &str = "workers";

/// Connection and retention settings.
#[derive(Clone, Debug)]
pub struct RedisConfig {
    /// `redis://host:port/db` (a password, if any, belongs in the URL from the environment).
    pub url: String,
    /// Key prefix, so several deployments can share one Redis.
    pub prefix: String,
    /// How long a finished batch's state keys are kept.
    pub retention: Duration,
    /// Response timeout of non-blocking calls.
    pub response_timeout: Duration,
}

impl RedisConfig {
    pub fn new(url: impl Into<String>) -> RedisConfig {
        RedisConfig {
            url: url.into(),
            prefix: "thermosieve".into(),
            retention: Duration::from_secs(7 * 24 * 3600),
            response_timeout: Duration::from_secs(10),
        }
    }
}

/// The Redis Streams queue.
pub struct RedisQueue {
    client: redis::Client,
    cfg: RedisConfig,
    conn: ConnectionManager,
    /// Idle connections for blocking reads, keyed by their response timeout in ms. A
    /// `std::sync::Mutex`: it is held only to push or pop, never across an await.
    blocking: Mutex<HashMap<u64, Vec<MultiplexedConnection>>>,
    scripts: Scripts,
}

struct Scripts {
    enqueue: Script,
    seal: Script,
    complete_chunk: Script,
    finish: Script,
    stop: Script,
}

// Returns 1 when added (or added before: a chunk whose seq is below the batch's next_seq was
// enqueued by an earlier try whose reply was lost, so a retry is safe), -1 for an unknown
// batch, 0 for a batch past receiving, and -2 - depth when the stream already holds ARGV[3]
// entries or more (nothing added).
const ENQUEUE_LUA: &str = r#"
if redis.call('EXISTS', KEYS[2]) == 0 then return -1 end
if redis.call('HGET', KEYS[2], 'state') ~= 'receiving' then return 0 end
local seq = tonumber(ARGV[5])
if seq < tonumber(redis.call('HGET', KEYS[2], 'next_seq') or '0') then return 1 end
local depth = redis.call('XLEN', KEYS[1])
if depth >= tonumber(ARGV[3]) then return -2 - depth end
redis.call('XADD', KEYS[1], '*', 'task', ARGV[1])
redis.call('HSET', KEYS[2], 'last_activity_unix_ms', ARGV[4], 'next_seq', seq + 1)
redis.call('HINCRBY', KEYS[2], 'chunks_total', 1)
redis.call('HINCRBY', KEYS[2], 'cases_total', ARGV[2])
return 1
"#;

const MAYBE_FINALIZE_LUA: &str = r#"
local function maybe_finalize(stream, hash, payload)
  local state = redis.call('HGET', hash, 'state')
  local done = tonumber(redis.call('HGET', hash, 'chunks_done') or '0')
  local total = tonumber(redis.call('HGET', hash, 'chunks_total') or '0')
  if state == 'running' and done >= total then
    redis.call('HSET', hash, 'state', 'finalizing')
    redis.call('XADD', stream, '*', 'task', payload)
  end
end
"#;

const SEAL_LUA: &str = r#"
if redis.call('EXISTS', KEYS[2]) == 0 then return -1 end
if redis.call('HGET', KEYS[2], 'state') ~= 'receiving' then return 0 end
redis.call('HSET', KEYS[2], 'state', 'running')
maybe_finalize(KEYS[1], KEYS[2], ARGV[1])
return 1
"#;

const COMPLETE_CHUNK_LUA: &str = r#"
redis.call('XACK', KEYS[1], ARGV[1], ARGV[2])
redis.call('XDEL', KEYS[1], ARGV[2])
if redis.call('EXISTS', KEYS[2]) == 0 then return -1 end
if redis.call('SADD', KEYS[3], ARGV[3]) == 1 then
  redis.call('HINCRBY', KEYS[2], 'chunks_done', 1)
  redis.call('HINCRBY', KEYS[2], 'cases_done', ARGV[4])
  redis.call('HINCRBY', KEYS[2], 'cases_error', ARGV[5])
  redis.call('HINCRBY', KEYS[2], 'chunks_dead', ARGV[6])
end
maybe_finalize(KEYS[1], KEYS[2], ARGV[7])
return 1
"#;

const FINISH_LUA: &str = r#"
redis.call('XACK', KEYS[1], ARGV[1], ARGV[2])
redis.call('XDEL', KEYS[1], ARGV[2])
if redis.call('EXISTS', KEYS[2]) == 0 then return -1 end
local state = redis.call('HGET', KEYS[2], 'state')
if not FINAL[state] then
  redis.call('HSET', KEYS[2], 'state', ARGV[3], 'message', ARGV[4], 'finished_unix_ms', ARGV[5])
end
redis.call('EXPIRE', KEYS[2], ARGV[6])
redis.call('EXPIRE', KEYS[3], ARGV[6])
return 1
"#;

const STOP_LUA: &str = r#"
if redis.call('EXISTS', KEYS[1]) == 0 then return -1 end
local state = redis.call('HGET', KEYS[1], 'state')
if not FINAL[state] then
  redis.call('HSET', KEYS[1], 'state', ARGV[1], 'message', ARGV[2], 'finished_unix_ms', ARGV[3])
  redis.call('EXPIRE', KEYS[1], ARGV[4])
  redis.call('EXPIRE', KEYS[2], ARGV[4])
end
return 1
"#;

impl RedisQueue {
    /// Connect and make sure the stream and the consumer group exist.
    ///
    /// # Errors
    /// Connection errors.
    pub async fn connect(cfg: RedisConfig) -> Result<RedisQueue, QueueError> {
        let client = redis::Client::open(cfg.url.as_str())?;
        // A connection manager reconnects by itself (with backoff) after Redis restarts or the
        // link drops; a plain multiplexed connection would stay broken.
        let conn = client
            .get_connection_manager_with_config(
                ConnectionManagerConfig::new()
                    .set_response_timeout(Some(cfg.response_timeout))
                    .set_connection_timeout(Some(Duration::from_secs(5)))
                    .set_max_delay(Duration::from_secs(2))
                    .set_number_of_retries(4),
            )
            .await?;
        let with_finalize = |body: &str| format!("{MAYBE_FINALIZE_LUA}\n{body}");
        // The final-state rule is the model's (`BatchState::is_final`), handed to the scripts as
        // a Lua set, not written out again.
        let final_states: Vec<String> = BatchState::ALL
            .iter()
            .filter(|s| s.is_final())
            .map(|s| format!("['{}'] = true", s.as_str()))
            .collect();
        let with_final = |body: &str| format!("local FINAL = {{{}}}\n{body}", final_states.join(", "));
        let scripts = Scripts {
            enqueue: Script::new(ENQUEUE_LUA),
            seal: Script::new(&with_finalize(SEAL_LUA)),
            complete_chunk: Script::new(&with_finalize(COMPLETE_CHUNK_LUA)),
            finish: Script::new(&with_final(FINISH_LUA)),
            stop: Script::new(&with_final(STOP_LUA)),
        };
        let q = RedisQueue {
            client,
            cfg,
            conn,
            blocking: Mutex::new(HashMap::new()),
            scripts,
        };
        q.ensure_group().await?;
        Ok(q)
    }

    fn tasks_key(&self) -> String {
        format!("{}:tasks", self.cfg.prefix)
    }
    fn receiving_key(&self) -> String {
        format!("{}:receiving", self.cfg.prefix)
    }
    fn dead_key(&self) -> String {
        format!("{}:dead", self.cfg.prefix)
    }
    fn batch_key(&self, id: &str) -> String {
        format!("{}:batch:{id}", self.cfg.prefix)
    }
    fn done_key(&self, id: &str) -> String {
        format!("{}:batch:{id}:done", self.cfg.prefix)
    }

    async fn ensure_group(&self) -> Result<(), QueueError> {
        let mut c = self.conn.clone();
        // "0": a group recreated after a loss also sees entries added before it.
        let r: Result<(), redis::RedisError> = redis::cmd("XGROUP")
            .arg("CREATE")
            .arg(self.tasks_key())
            .arg(GROUP)
            .arg("0")
            .arg("MKSTREAM")
            .query_async(&mut c)
            .await;
        match r {
            Ok(()) => Ok(()),
            Err(e) if e.code() == Some("BUSYGROUP") => Ok(()),
            Err(e) => Err(e.into()),
        }
    }

    fn map_group_error(&self, e: redis::RedisError) -> QueueError {
        if e.code() == Some("NOGROUP") {
            QueueError::GroupMissing {
                stream: self.tasks_key(),
                group: GROUP.into(),
            }
        } else {
            e.into()
        }
    }

    async fn blocking_conn(&self, response_timeout: Duration) -> Result<(u64, MultiplexedConnection), QueueError> {
        let key = response_timeout.as_millis() as u64;
        let idle = self
            .blocking
            .lock()
            .unwrap_or_else(|e| e.into_inner())
            .get_mut(&key)
            .and_then(Vec::pop);
        match idle {
            Some(c) => Ok((key, c)),
            None => {
                let cfg = AsyncConnectionConfig::new()
                    .set_response_timeout(Some(response_timeout))
                    .set_connection_timeout(Some(Duration::from_secs(5)));
                Ok((key, self.client.get_multiplexed_async_connection_with_config(&cfg).await?))
            }
        }
    }

    fn finalize_payload(batch_id: &str) -> Result<String, QueueError> {
        Ok(serde_json::to_string(&Task::Finalize {
            batch_id: batch_id.to_string(),
        })?)
    }

    fn decode(entry: &StreamId) -> Result<Task, QueueError> {
        let bad = |reason: &str| QueueError::BadEntry {
            entry_id: entry.id.clone(),
            reason: reason.to_string(),
        };
        let v = entry.map.get("task").ok_or_else(|| bad("no field 'task'"))?;
        let bytes = match v {
            Value::BulkString(b) => b.as_slice(),
            Value::SimpleString(s) => s.as_bytes(),
            _ => return Err(bad("field 'task' is not a string")),
        };
        serde_json::from_slice(bytes).map_err(|e| bad(&e.to_string()))
    }

    async fn delivery_count(&self, id: &str) -> Result<u64, QueueError> {
        let mut c = self.conn.clone();
        let r: StreamPendingCountReply = redis::cmd("XPENDING")
            .arg(self.tasks_key())
            .arg(GROUP)
            .arg(id)
            .arg(id)
            .arg(1)
            .query_async(&mut c)
            .await
            .map_err(|e| self.map_group_error(e))?;
        Ok(r.ids.first().map_or(1, |p| p.times_delivered as u64))
    }

    fn check(&self, r: i64, batch_id: &str, what: &'static str) -> Result<(), QueueError> {
        match r {
            -1 => Err(QueueError::UnknownBatch(batch_id.to_string())),
            0 => Err(QueueError::WrongState {
                batch_id: batch_id.to_string(),
                state: "past receiving",
                what,
            }),
            _ => Ok(()),
        }
    }
}

fn field<'a>(h: &'a HashMap<String, String>, k: &str) -> Option<&'a str> {
    h.get(k).map(String::as_str)
}

fn count(h: &HashMap<String, String>, k: &str) -> u64 {
    field(h, k).and_then(|v| v.parse().ok()).unwrap_or(0)
}

#[async_trait::async_trait]
impl Queue for RedisQueue {
    async fn create_batch(&self, spec: &BatchSpec) -> Result<(), QueueError> {
        let mut c = self.conn.clone();
        let key = self.batch_key(&spec.batch_id);
        let _: () = redis::pipe()
            .atomic()
            .hset_multiple(
                &key,
                &[
                    ("spec", serde_json::to_string(spec)?),
                    ("state", BatchState::Receiving.as_str().to_string()),
                    ("created_unix_ms", spec.created_unix_ms.to_string()),
                    ("chunks_total", "0".into()),
                    ("chunks_done", "0".into()),
                    ("chunks_dead", "0".into()),
                    ("cases_total", "0".into()),
                    ("cases_done", "0".into()),
                    ("cases_error", "0".into()),
                ],
            )
            .ignore()
            // A batch whose submitter vanishes must not live forever either.
            .expire(&key, self.cfg.retention.as_secs() as i64)
            .ignore()
            // The batches receiving, for `expire_receiving`.
            .sadd(self.receiving_key(), &spec.batch_id)
            .ignore()
            .query_async(&mut c)
            .await?;
        Ok(())
    }

    async fn batch_spec(&self, batch_id: &str) -> Result<Option<BatchSpec>, QueueError> {
        let mut c = self.conn.clone();
        let s: Option<String> = redis::cmd("HGET")
            .arg(self.batch_key(batch_id))
            .arg("spec")
            .query_async(&mut c)
            .await?;
        Ok(match s {
            Some(s) => Some(serde_json::from_str(&s)?),
            None => None,
        })
    }

    async fn enqueue(&self, chunk: &Chunk, max_depth: u64) -> Result<(), QueueError> {
        let payload = chunk_payload(chunk)?;
        let mut c = self.conn.clone();
        let r: i64 = self
            .scripts
            .enqueue
            .key(self.tasks_key())
            .key(self.batch_key(&chunk.batch_id))
            .arg(payload)
            .arg(chunk.cases.len())
            .arg(max_depth.min(i64::MAX as u64))
            .arg(now_unix_ms())
            .arg(chunk.seq)
            .invoke_async(&mut c)
            .await?;
        if r <= -2 {
            return Err(QueueError::Full {
                depth: (-2 - r).unsigned_abs(),
            });
        }
        self.check(r, &chunk.batch_id, "chunks")
    }

    async fn seal(&self, batch_id: &str) -> Result<(), QueueError> {
        let mut c = self.conn.clone();
        let r: i64 = self
            .scripts
            .seal
            .key(self.tasks_key())
            .key(self.batch_key(batch_id))
            .arg(Self::finalize_payload(batch_id)?)
            .invoke_async(&mut c)
            .await?;
        self.check(r, batch_id, "a seal")
    }

    async fn depth(&self) -> Result<u64, QueueError> {
        let mut c = self.conn.clone();
        let n: u64 = redis::cmd("XLEN").arg(self.tasks_key()).query_async(&mut c).await?;
        Ok(n)
    }

    async fn stats(&self) -> Result<QueueStats, QueueError> {
        let mut c = self.conn.clone();
        // The group's `lag` (entries never delivered) and `pending` (delivered, not acknowledged).
        let groups: Vec<HashMap<String, redis::Value>> =
            redis::cmd("XINFO").arg("GROUPS").arg(self.tasks_key()).query_async(&mut c).await?;
        let number = |g: &HashMap<String, redis::Value>, k: &str| match g.get(k) {
            Some(redis::Value::Int(n)) => u64::try_from(*n).ok(),
            _ => None,
        };
        let group = groups
            .iter()
            .find(|g| matches!(g.get("name"), Some(redis::Value::BulkString(b)) if b.as_slice() == GROUP.as_bytes()))
            .ok_or_else(|| QueueError::GroupMissing {
                stream: self.tasks_key(),
                group: GROUP.to_string(),
            })?;
        let in_flight = number(group, "pending").unwrap_or(0);
        let length: u64 = redis::cmd("XLEN").arg(self.tasks_key()).query_async(&mut c).await?;
        // `lag` is unknown (nil) after some deletions; entries not pending are then waiting.
        let waiting = number(group, "lag").unwrap_or(length.saturating_sub(in_flight));
        let dead_letters: u64 = redis::cmd("XLEN").arg(self.dead_key()).query_async(&mut c).await?;
        // Batches: every `<prefix>:batch:<id>` hash, scanned in steps, states read in one
        // pipeline per step.
        let pattern = format!("{}:batch:*", self.cfg.prefix);
        let mut states = Vec::new();
        let mut cursor = 0u64;
        loop {
            let (next, keys): (u64, Vec<String>) = redis::cmd("SCAN")
                .arg(cursor)
                .arg("MATCH")
                .arg(&pattern)
                .arg("COUNT")
                .arg(1000)
                .arg("TYPE")
                .arg("hash")
                .query_async(&mut c)
                .await?;
            let mut pipe = redis::pipe();
            for k in &keys {
                pipe.cmd("HGET").arg(k).arg("state");
            }
            let got: Vec<Option<String>> = if keys.is_empty() {
                Vec::new()
            } else {
                pipe.query_async(&mut c).await?
            };
            states.extend(got.iter().flatten().filter_map(|s| BatchState::parse(s)));
            cursor = next;
            if cursor == 0 {
                break;
            }
        }
        let mut stats = QueueStats {
            waiting,
            in_flight,
            dead_letters,
            batches: Vec::new(),
        };
        stats.count_batches(states);
        Ok(stats)
    }

    async fn poll(&self, consumer: &str, block: Duration) -> Result<Option<Delivery>, QueueError> {
        // The response timeout must exceed the BLOCK time, or every idle read times out.
        let (key, mut c) = self.blocking_conn(block + Duration::from_secs(5)).await?;
        let r: Result<Option<StreamReadReply>, redis::RedisError> = redis::cmd("XREADGROUP")
            .arg("GROUP")
            .arg(GROUP)
            .arg(consumer)
            .arg("COUNT")
            .arg(1)
            .arg("BLOCK")
            .arg(block.as_millis() as u64)
            .arg("STREAMS")
            .arg(self.tasks_key())
            .arg(">")
            .query_async(&mut c)
            .await;
        let reply = match r {
            Ok(r) => {
                self.blocking
                    .lock()
                    .unwrap_or_else(|e| e.into_inner())
                    .entry(key)
                    .or_default()
                    .push(c);
                r
            }
            // A failed connection is dropped rather than returned to the pool.
            Err(e) => return Err(self.map_group_error(e)),
        };
        let Some(entry) = reply.and_then(|r| r.keys.into_iter().next()).and_then(|k| k.ids.into_iter().next()) else {
            return Ok(None);
        };
        let task = Self::decode(&entry)?;
        Ok(Some(Delivery {
            entry_id: entry.id,
            task,
            deliveries: 1,
        }))
    }

    async fn reclaim(&self, consumer: &str, min_idle: Duration, max: usize) -> Result<Vec<Delivery>, QueueError> {
        let mut c = self.conn.clone();
        let r: StreamAutoClaimReply = redis::cmd("XAUTOCLAIM")
            .arg(self.tasks_key())
            .arg(GROUP)
            .arg(consumer)
            .arg(min_idle.as_millis() as u64)
            .arg("0-0")
            .arg("COUNT")
            .arg(max)
            .query_async(&mut c)
            .await
            .map_err(|e| self.map_group_error(e))?;
        for id in &r.deleted_ids {
            tracing::error!(entry_id = %id, "pending entry was deleted from the stream before it was acknowledged");
        }
        let mut out = Vec::with_capacity(r.claimed.len());
        for entry in r.claimed {
            let deliveries = self.delivery_count(&entry.id).await?;
            match Self::decode(&entry) {
                Ok(task) => out.push(Delivery {
                    entry_id: entry.id,
                    task,
                    deliveries,
                }),
                Err(e) => {
                    tracing::error!(error = %e, "dropping an undecodable queue entry");
                    let _: () = redis::cmd("XACK")
                        .arg(self.tasks_key())
                        .arg(GROUP)
                        .arg(&entry.id)
                        .query_async(&mut c)
                        .await?;
                }
            }
        }
        Ok(out)
    }

    async fn expire_receiving(&self, idle: Duration) -> Result<Vec<String>, QueueError> {
        let mut c = self.conn.clone();
        let ids: Vec<String> = redis::cmd("SMEMBERS").arg(self.receiving_key()).query_async(&mut c).await?;
        let cutoff = now_unix_ms().saturating_sub(idle.as_millis() as u64);
        let mut out = Vec::new();
        for id in ids {
            let (state, created, active): (Option<String>, Option<u64>, Option<u64>) = redis::cmd("HMGET")
                .arg(self.batch_key(&id))
                .arg("state")
                .arg("created_unix_ms")
                .arg("last_activity_unix_ms")
                .query_async(&mut c)
                .await?;
            let receiving = state.as_deref() == Some(BatchState::Receiving.as_str());
            if receiving && active.or(created).unwrap_or(0) > cutoff {
                continue;
            }
            if receiving {
                self.stop_batch(&id, BatchState::Failed, crate::ABANDONED).await?;
                out.push(id.clone());
            }
            let _: () = redis::cmd("SREM").arg(self.receiving_key()).arg(&id).query_async(&mut c).await?;
        }
        Ok(out)
    }

    async fn keep(&self, delivery: &Delivery, consumer: &str) -> Result<(), QueueError> {
        // XCLAIM to the holder itself resets the entry's idle time; JUSTID leaves the delivery
        // count alone (a lease renewal is not a redelivery).
        let mut c = self.conn.clone();
        let _: Value = redis::cmd("XCLAIM")
            .arg(self.tasks_key())
            .arg(GROUP)
            .arg(consumer)
            .arg(0)
            .arg(&delivery.entry_id)
            .arg("JUSTID")
            .query_async(&mut c)
            .await
            .map_err(|e| self.map_group_error(e))?;
        Ok(())
    }

    async fn complete_chunk(&self, delivery: &Delivery, seq: u64, report: ChunkReport) -> Result<(), QueueError> {
        let batch_id = delivery.task.batch_id();
        let mut c = self.conn.clone();
        let r: i64 = self
            .scripts
            .complete_chunk
            .key(self.tasks_key())
            .key(self.batch_key(batch_id))
            .key(self.done_key(batch_id))
            .arg(GROUP)
            .arg(&delivery.entry_id)
            .arg(seq)
            .arg(report.cases)
            .arg(report.errors)
            .arg(u64::from(report.dead_lettered))
            .arg(Self::finalize_payload(batch_id)?)
            .invoke_async(&mut c)
            .await?;
        self.check(r, batch_id, "results")
    }

    async fn dead_letter(&self, delivery: &Delivery, reason: &str) -> Result<(), QueueError> {
        let mut c = self.conn.clone();
        let seq = match &delivery.task {
            Task::Chunk(ch) => ch.seq.to_string(),
            Task::Finalize { .. } => "finalize".into(),
        };
        let _: String = redis::cmd("XADD")
            .arg(self.dead_key())
            .arg("MAXLEN")
            .arg("~")
            .arg(10_000)
            .arg("*")
            .arg("batch_id")
            .arg(delivery.task.batch_id())
            .arg("seq")
            .arg(seq)
            .arg("deliveries")
            .arg(delivery.deliveries)
            .arg("reason")
            .arg(reason)
            .arg("task")
            .arg(serde_json::to_string(&delivery.task)?)
            .query_async(&mut c)
            .await?;
        Ok(())
    }

    async fn complete_finalize(&self, delivery: &Delivery, outcome: Finalized) -> Result<(), QueueError> {
        let batch_id = delivery.task.batch_id();
        let (state, message) = outcome.state_and_message();
        let mut c = self.conn.clone();
        let r: i64 = self
            .scripts
            .finish
            .key(self.tasks_key())
            .key(self.batch_key(batch_id))
            .key(self.done_key(batch_id))
            .arg(GROUP)
            .arg(&delivery.entry_id)
            .arg(state.as_str())
            .arg(message)
            .arg(now_unix_ms())
            .arg(self.cfg.retention.as_secs())
            .invoke_async(&mut c)
            .await?;
        self.check(r, batch_id, "a final state")
    }

    async fn discard(&self, delivery: &Delivery) -> Result<(), QueueError> {
        let mut c = self.conn.clone();
        let _: () = redis::pipe()
            .cmd("XACK")
            .arg(self.tasks_key())
            .arg(GROUP)
            .arg(&delivery.entry_id)
            .ignore()
            .cmd("XDEL")
            .arg(self.tasks_key())
            .arg(&delivery.entry_id)
            .ignore()
            .query_async(&mut c)
            .await?;
        Ok(())
    }

    async fn progress(&self, batch_id: &str) -> Result<Option<Progress>, QueueError> {
        let mut c = self.conn.clone();
        let h: HashMap<String, String> = redis::cmd("HGETALL").arg(self.batch_key(batch_id)).query_async(&mut c).await?;
        let Some(state) = field(&h, "state").and_then(BatchState::parse) else {
            return Ok(None);
        };
        Ok(Some(Progress {
            state,
            chunks_total: count(&h, "chunks_total"),
            chunks_done: count(&h, "chunks_done"),
            chunks_dead: count(&h, "chunks_dead"),
            cases_total: count(&h, "cases_total"),
            cases_done: count(&h, "cases_done"),
            cases_error: count(&h, "cases_error"),
            message: field(&h, "message").unwrap_or_default().to_string(),
            created_unix_ms: count(&h, "created_unix_ms"),
            finished_unix_ms: field(&h, "finished_unix_ms").and_then(|v| v.parse().ok()),
        }))
    }

    async fn stop_batch(&self, batch_id: &str, state: BatchState, message: &str) -> Result<BatchState, QueueError> {
        let mut c = self.conn.clone();
        let r: i64 = self
            .scripts
            .stop
            .key(self.batch_key(batch_id))
            .key(self.done_key(batch_id))
            .arg(state.as_str())
            .arg(message)
            .arg(now_unix_ms())
            .arg(self.cfg.retention.as_secs())
            .invoke_async(&mut c)
            .await?;
        if r == -1 {
            return Err(QueueError::UnknownBatch(batch_id.to_string()));
        }
        Ok(self.progress(batch_id).await?.map_or(state, |p| p.state))
    }

    async fn recover(&self) -> Result<(), QueueError> {
        self.ensure_group().await
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_chunk_payload_decodes_as_its_task() {
        let chunk = Chunk {
            batch_id: "ab".into(),
            seq: 7,
            cases: vec![CaseInput {
                case_id: "c1".into(),
                reaction: "CO + O2 -> CO2".into(),
                route_id: Some("r".into()),
                step: Some(2),
                row: 3,
                ..Default::default()
            }]
            .into(),
        };
        let task: Task = serde_json::from_str(&chunk_payload(&chunk).unwrap()).unwrap();
        assert_eq!(task, Task::Chunk(chunk));
    }
}
