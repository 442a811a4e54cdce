/*!
Reading logged data back: the analysis frame (raw chunks streamed into the one-timeline aligner of
`core::series`) and downsampled chart series from the rollups.
*/

use serde::Serialize;
use sqlx::{Row, SqlitePool};

use super::chunk;
use super::rollup::{decode_day, Acc, DAY_MS, HOUR_MS, MINUTE_MS};
use super::StoreError;
use crate::core::basis::{Basis, StoredForm};
use crate::core::series::{
    merge_power, Aligner, CounterAligner, Frame, FrameColumn, Grid, Partial, PressurePoint, Signal,
};
use crate::core::units::SiteAir;

/// A channel on the grid: bin means and the partly covered bins (`core::series::FrameColumn`).
type Aligned = (Vec<f32>, Vec<Partial>);

/// A chunk blob for the aligner: its upload's step to SI and gap threshold, and the blob.
type Piece = ((f64, f64), i64, Vec<u8>);

/// The most bins an analysis frame has; longer logs get a coarser step (documented in DEVELOPERS.md).
pub const MAX_FRAME_BINS: usize = 600_000;

/// The bin accumulators of a frame being built may hold this much at once (bytes); see
/// [`load_frame`].
const ALIGN_BUDGET_BYTES: usize = 16 << 20;

/// A stored channel with the span of its readings.
#[derive(Debug, Clone, Serialize)]
pub struct ChannelInfo {
    pub id: i64,
    pub quantity: String,
    pub compressor_id: Option<i64>,
    pub compressor_tag: Option<String>,
    pub label: String,
    pub unit: String,
    /// Where a pressure was measured (`None`: not a pressure, or stored before points: the header).
    pub point: Option<String>,
    pub first_ms: i64,
    pub last_ms: i64,
    pub readings: i64,
    /// What each complete upload holds of it: how it is stored and its logging interval.
    #[serde(skip)]
    pub parts: Vec<UploadPart>,
}

/// One upload's readings of a channel: how they are stored and their typical logging interval.
#[derive(Debug, Clone, PartialEq)]
pub struct UploadPart {
    pub upload_id: i64,
    pub form: StoredForm,
    /// The median step between readings (`None`: unknown, the channel's span is used).
    pub interval_ms: Option<i64>,
}

impl ChannelInfo {
    /// The channel's typical logging interval: the shortest of its uploads' median steps (robust to
    /// night gaps, which stretch a span / (readings - 1) estimate); that estimate only when no
    /// upload knows its interval.
    pub fn interval_ms(&self) -> i64 {
        if let Some(i) = self.parts.iter().filter_map(|p| p.interval_ms).min() {
            return i.max(1);
        }
        if self.readings > 1 {
            ((self.last_ms - self.first_ms) / (self.readings - 1)).max(1)
        } else {
            60_000
        }
    }

    /// The interval of one upload's readings (the channel's when that upload's is unknown).
    fn upload_interval_ms(&self, upload_id: i64) -> i64 {
        self.part(upload_id).and_then(|p| p.interval_ms).unwrap_or_else(|| self.interval_ms()).max(1)
    }

    fn part(&self, upload_id: i64) -> Option<&UploadPart> {
        self.parts.iter().find(|p| p.upload_id == upload_id)
    }

    /// The affine step stored value → SI with the site's air `site` for one upload's readings.
    pub fn to_site(&self, upload_id: i64, site: &SiteAir) -> (f64, f64) {
        self.part(upload_id).map_or((1.0, 0.0), |p| p.form.to_site(site))
    }

    /// Whether the site's air changes how this channel reads.
    pub fn follows_site(&self) -> bool {
        self.parts.iter().any(|p| {
            p.form.basis.follows_site() || p.form.applied_scale != 1.0 || p.form.applied_offset != 0.0
        })
    }
    pub fn name(&self) -> String {
        match &self.compressor_tag {
            Some(t) => format!("{t} {}", self.quantity),
            None => self.label.clone(),
        }
    }
}

/// The audit's channels that hold complete readings.
pub async fn channels(pool: &SqlitePool, audit_id: i64) -> Result<Vec<ChannelInfo>, StoreError> {
    let rows = sqlx::query(
        "SELECT c.id, c.quantity, c.compressor_id, k.tag, c.label, c.unit, c.point, \
         min(uc.first_ms) AS first_ms, max(uc.last_ms) AS last_ms, sum(uc.readings) AS readings \
         FROM channel c JOIN upload_channel uc ON uc.channel_id = c.id \
         JOIN upload u ON u.id = uc.upload_id AND u.state = 'complete' \
         LEFT JOIN compressor k ON k.id = c.compressor_id \
         WHERE c.audit_id = ? GROUP BY c.id ORDER BY c.quantity, k.tag, c.label",
    )
    .bind(audit_id)
    .fetch_all(pool)
    .await?;
    let part_rows = sqlx::query(
        "SELECT uc.channel_id, uc.upload_id, uc.stored_form, uc.interval_ms FROM upload_channel uc \
         JOIN upload u ON u.id = uc.upload_id AND u.state = 'complete' WHERE u.audit_id = ? \
         ORDER BY uc.channel_id, uc.upload_id",
    )
    .bind(audit_id)
    .fetch_all(pool)
    .await?;
    let mut parts: std::collections::HashMap<i64, Vec<UploadPart>> = Default::default();
    for r in &part_rows {
        let form: Option<String> = r.get("stored_form");
        let upload_id: i64 = r.get("upload_id");
        // A row the start-up has not filled reads as stored (the step it was stored with).
        let form = match form.as_deref().map(serde_json::from_str::<StoredForm>) {
            Some(Ok(f)) => f,
            Some(Err(e)) => {
                return Err(StoreError::Damaged {
                    path: format!("upload {upload_id} stored_form"),
                    detail: e.to_string(),
                })
            }
            None => StoredForm::measured(Basis::Site),
        };
        parts.entry(r.get("channel_id")).or_default().push(UploadPart {
            upload_id,
            form,
            interval_ms: r.get::<Option<i64>, _>("interval_ms").filter(|&i| i > 0),
        });
    }
    Ok(rows
        .iter()
        .map(|r| ChannelInfo {
            parts: parts.remove(&r.get::<i64, _>("id")).unwrap_or_default(),
            id: r.get("id"),
            quantity: r.get("quantity"),
            compressor_id: r.get("compressor_id"),
            compressor_tag: r.get("tag"),
            label: r.get("label"),
            unit: r.get("unit"),
            point: r.get("point"),
            first_ms: r.get("first_ms"),
            last_ms: r.get("last_ms"),
            readings: r.get("readings"),
        })
        .collect())
}

/// Chunks read per query while a frame is built: about 0.6 MB of blobs at the bench's 1.1 bytes a
/// reading, so that a channel's readings stream through memory instead of being held whole (a
/// channel of 16 M readings is some 18 MB of blobs).
const CHUNK_PAGE: i64 = 64;

/// Pages of one channel's chunk blobs that may wait for its aligner.
const PAGES_AHEAD: usize = 2;

/// One page of a channel's complete chunks over `[from_ms, to_ms]` in time order, after the chunk
/// `after` (start, upload) of the page before.
async fn chunk_page(
    pool: &SqlitePool,
    channel_id: i64,
    (from_ms, to_ms): (i64, i64),
    after: (i64, i64),
) -> Result<Vec<(i64, i64, Vec<u8>)>, StoreError> {
    Ok(sqlx::query_as(
        "SELECT ch.t_start_ms, ch.upload_id, ch.data FROM chunk ch \
         JOIN upload u ON u.id = ch.upload_id AND u.state = 'complete' \
         WHERE ch.channel_id = ? AND ch.t_end_ms >= ? AND ch.t_start_ms <= ? AND (ch.t_start_ms, ch.upload_id) > (?, ?) \
         ORDER BY ch.t_start_ms, ch.upload_id LIMIT ?",
    )
    .bind(channel_id)
    .bind(from_ms)
    .bind(to_ms)
    .bind(after.0)
    .bind(after.1)
    .bind(CHUNK_PAGE)
    .fetch_all(pool)
    .await?)
}

/// Where a channel's chunks that may reach `from_ms` begin: within one upload a channel's chunks
/// are disjoint and in time order (its readings strictly increase, `store::import`), so of each
/// upload only the last chunk starting at or before `from_ms` and those after it can; the least of
/// those starts (found in the `chunk_upload` index), so that a window late in a long log does not
/// read past every chunk before it. `i64::MIN` when an upload of the channel is not known.
async fn first_chunk_start(pool: &SqlitePool, c: &ChannelInfo, from_ms: i64) -> Result<i64, StoreError> {
    if c.parts.is_empty() {
        return Ok(i64::MIN);
    }
    let mut first = from_ms;
    for p in &c.parts {
        let start: Option<i64> = sqlx::query_scalar(
            "SELECT t_start_ms FROM chunk WHERE upload_id = ? AND channel_id = ? AND t_start_ms <= ? \
             ORDER BY t_start_ms DESC LIMIT 1",
        )
        .bind(p.upload_id)
        .bind(c.id)
        .bind(from_ms)
        .fetch_optional(pool)
        .await?;
        first = first.min(start.unwrap_or(from_ms));
    }
    Ok(first)
}

/// Build the analysis frame for the audit's channels over `window` (default: all logged time), with
/// the site's air `site` applied to each upload's readings as they are stored (`core::basis`).
/// `compressor_ids` are the ids of the analysis' compressor slice, in its order.
pub async fn load_frame(
    pool: &SqlitePool,
    site: &SiteAir,
    chans: &[ChannelInfo],
    compressor_ids: &[i64],
    window: Option<(i64, i64)>,
) -> Result<Option<Frame>, StoreError> {
    if chans.is_empty() {
        return Ok(None);
    }
    let first = chans.iter().map(|c| c.first_ms).min().unwrap_or(0);
    let last = chans.iter().map(|c| c.last_ms).max().unwrap_or(0);
    let (from, to) = window.map(|(a, b)| (a.max(first), b.min(last))).unwrap_or((first, last));
    if to <= from {
        return Ok(None);
    }
    let native = chans.iter().map(|c| c.interval_ms()).min().unwrap_or(1000);
    let grid = Grid::choose(from, to, native, MAX_FRAME_BINS);
    // Channels are decoded and aligned side by side, as many at a time as the machine has cores
    // and the accumulators' budget allows (each holds its chunk blobs and a bin accumulator of 12
    // bytes a bin while it runs: 7.2 MB at the largest grid, so a long audit at a fine step aligns
    // no more channels at a time than the budget holds).
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get()).clamp(1, 4);
    let parallel = cores.min((ALIGN_BUDGET_BYTES / (12 * grid.len.max(1))).max(1));
    // The next channel starts as soon as any running one is done (not the oldest: channels cost
    // unequal times, their codings differ, and waiting on the oldest left a core idle).
    let mut running: tokio::task::JoinSet<Result<(usize, Aligned), StoreError>> = Default::default();
    let mut aligned: Vec<Option<Aligned>> = chans.iter().map(|_| None).collect();
    let mut join = |r: Result<Result<(usize, Aligned), StoreError>, tokio::task::JoinError>| {
        let (i, a) = r.map_err(|e| StoreError::Damaged { path: "frame".into(), detail: e.to_string() })??;
        aligned[i] = Some(a);
        Ok::<(), StoreError>(())
    };
    for (index, c) in chans.iter().enumerate() {
        if running.len() >= parallel {
            join(running.join_next().await.expect("running is not empty"))?;
        }
        // Each chunk with its upload's step to SI and its upload's gap threshold: 3 × that
        // upload's typical interval (a line is drawn across nothing longer). The blobs come in
        // pages through a short queue to the aligner's thread.
        let (page_tx, mut page_rx) = tokio::sync::mpsc::channel::<Vec<Piece>>(PAGES_AHEAD);
        let g = grid;
        let energy = c.quantity == "energy";
        let align = tokio::task::spawn_blocking(move || -> Result<Aligned, StoreError> {
            let mut decoder = chunk::Decoder::default();
            if energy {
                let mut a = CounterAligner::new(g, 0);
                while let Some(page) = page_rx.blocking_recv() {
                    for ((k, o), gap, b) in &page {
                        a.set_max_gap(*gap);
                        let (times, values) = decoder.decode(b)?;
                        for (&t, &v) in times.iter().zip(values.iter()) {
                            a.push(t, v * k + o);
                        }
                    }
                }
                Ok(a.finish_with_partial())
            } else {
                let mut a = Aligner::new(g, 0);
                while let Some(page) = page_rx.blocking_recv() {
                    for ((k, o), gap, b) in &page {
                        a.set_max_gap(*gap);
                        let (times, values) = decoder.decode(b)?;
                        if (*k, *o) != (1.0, 0.0) {
                            for v in values.iter_mut() {
                                *v = *v * k + o;
                            }
                        }
                        a.push_run(times, values);
                    }
                }
                Ok(a.finish_with_partial())
            }
        });
        let (pool, c, site) = (pool.clone(), c.clone(), *site);
        let windowed = window.is_some();
        running.spawn(async move {
            // The first page's key: every chunk from the first that may reach `from` on.
            let first = if windowed { first_chunk_start(&pool, &c, from).await? } else { i64::MIN };
            let mut after = (first, i64::MIN);
            loop {
                let page = chunk_page(&pool, c.id, (from, to), after).await?;
                let Some(&(t, u, _)) = page.last() else { break };
                after = (t, u);
                let full = page.len() as i64 == CHUNK_PAGE;
                let page: Vec<Piece> = page
                    .into_iter()
                    .map(|(_, u, b)| (c.to_site(u, &site), (3 * c.upload_interval_ms(u)).max(g.step_ms), b))
                    .collect();
                // The aligner stopped (a damaged chunk): its error is the answer.
                if page_tx.send(page).await.is_err() || !full {
                    break;
                }
            }
            drop(page_tx);
            let a = align
                .await
                .map_err(|e| StoreError::Damaged { path: "frame".into(), detail: e.to_string() })?;
            Ok((index, a?))
        });
    }
    while let Some(r) = running.join_next().await {
        join(r)?;
    }
    let aligned = aligned.into_iter().map(|a| a.expect("every channel aligned"));
    let mut columns: Vec<FrameColumn> = Vec::with_capacity(chans.len());
    // A compressor's energy counter joins its logged power as one column (`core::series::merge`):
    // kept aside until every column is built, so the order of the channels does not matter.
    let mut counters: Vec<FrameColumn> = vec![];
    for (c, (values, partial)) in chans.iter().zip(aligned) {
        let signal = match c.quantity.as_str() {
            "power" | "energy" => Signal::Power,
            "pressure" => Signal::Pressure,
            "flow" => Signal::Flow,
            _ => Signal::Temperature,
        };
        let column = FrameColumn {
            from_counter: c.quantity == "energy",
            point: c.point.as_deref().and_then(PressurePoint::parse).unwrap_or_default(),
            signal,
            compressor: c.compressor_id.and_then(|id| compressor_ids.iter().position(|&x| x == id)),
            label: c.name(),
            values,
            partial,
        };
        if c.quantity == "energy" && column.compressor.is_some() {
            counters.push(column);
        } else {
            columns.push(column);
        }
    }
    for counter in counters {
        let power =
            columns.iter().position(|p| p.signal == Signal::Power && p.compressor == counter.compressor);
        match power {
            Some(k) => {
                let p = columns.remove(k);
                columns.insert(k, merge_power(p, &counter));
            }
            None => columns.push(counter),
        }
    }
    Ok(Some(Frame { grid, columns }))
}

/// The UTC hours in which the audit's channels hold readings (from the hourly rollups), runs of
/// consecutive hours joined: each run as (first_ms, last_ms) of its hours, in time order. Files
/// years apart give runs years apart, with nothing between them.
pub async fn logged_hour_spans(pool: &SqlitePool, audit_id: i64) -> Result<Vec<(i64, i64)>, StoreError> {
    let hours: Vec<i64> = sqlx::query_scalar(
        "SELECT DISTINCT r.hour_ms FROM channel c JOIN rollup_hour r ON r.channel_id = c.id \
         JOIN upload u ON u.id = r.upload_id AND u.state = 'complete' WHERE c.audit_id = ? ORDER BY r.hour_ms",
    )
    .bind(audit_id)
    .fetch_all(pool)
    .await?;
    let mut spans: Vec<(i64, i64)> = vec![];
    for h in hours {
        match spans.last_mut() {
            Some((_, last)) if *last + 1 == h => *last = h + HOUR_MS - 1,
            _ => spans.push((h, h + HOUR_MS - 1)),
        }
    }
    Ok(spans)
}

/// The least and greatest reading of `channel` (SI, with the site's air `site` applied to each
/// upload's readings), from the hourly rollups: what the charts' least-to-greatest band reaches.
/// `None` when it holds no readings.
pub async fn reading_extremes(
    pool: &SqlitePool,
    site: &SiteAir,
    channel: &ChannelInfo,
) -> Result<Option<(f64, f64)>, StoreError> {
    let rows = sqlx::query(
        "SELECT r.upload_id, min(r.min) AS lo, max(r.max) AS hi FROM rollup_hour r JOIN upload u \
         ON u.id = r.upload_id AND u.state = 'complete' WHERE r.channel_id = ? GROUP BY r.upload_id",
    )
    .bind(channel.id)
    .fetch_all(pool)
    .await?;
    let mut out: Option<(f64, f64)> = None;
    for r in rows {
        let (Some(lo), Some(hi)) = (r.get::<Option<f64>, _>("lo"), r.get::<Option<f64>, _>("hi")) else {
            continue;
        };
        // The step to the site is affine with a positive scale: extremes map to extremes.
        let (k, o) = channel.to_site(r.get("upload_id"), site);
        let (lo, hi) = (lo * k + o, hi * k + o);
        out = Some(out.map_or((lo, hi), |(a, b)| (a.min(lo), b.max(hi))));
    }
    Ok(out)
}

/// The bucket length of [`chart_series`] over `from_ms..to_ms` at `max_points`: whole minutes, or
/// whole hours (read from the hourly rollups) when a bucket is an hour or more.
pub fn chart_bucket_ms(from_ms: i64, to_ms: i64, max_points: usize) -> i64 {
    let span = (to_ms - from_ms).max(MINUTE_MS);
    let raw_bucket = span / max_points.max(1) as i64;
    if raw_bucket >= HOUR_MS {
        raw_bucket.div_euclid(HOUR_MS).max(1) * HOUR_MS
    } else {
        raw_bucket.div_euclid(MINUTE_MS).max(1) * MINUTE_MS
    }
}

/// Two chart points of `channel` further apart than this lie across a gap in the log, and a line
/// breaks between them: more than one empty bucket, and more than three logging intervals (the
/// analysis fills no longer gap, `core::series`), so a logger slower than the buckets stays one line.
pub fn chart_gap_ms(channel: &ChannelInfo, from_ms: i64, to_ms: i64, max_points: usize) -> i64 {
    (2 * chart_bucket_ms(from_ms, to_ms, max_points)).max(3 * channel.interval_ms())
}

/// One chart point: the bucket's start and its min, mean and max (SI units).
#[derive(Debug, Clone, Copy, Serialize)]
pub struct ChartPoint {
    pub t_ms: i64,
    pub min: f64,
    pub mean: f64,
    pub max: f64,
}

/// A channel's readings between `from` and `to`, downsampled to at most `max_points` buckets of
/// min/mean/max, read from the minute or hour rollups (never from raw chunks), with the site's air
/// `site` applied to each upload's rollups as they are stored (an affine step with a positive
/// scale, so min, max and mean map exactly).
pub async fn chart_series(
    pool: &SqlitePool,
    site: &SiteAir,
    channel: &ChannelInfo,
    from_ms: i64,
    to_ms: i64,
    max_points: usize,
) -> Result<Vec<ChartPoint>, StoreError> {
    let bucket = chart_bucket_ms(from_ms, to_ms, max_points);
    let use_hours = bucket >= HOUR_MS;
    let mut out: Vec<(i64, Acc)> = vec![];
    let channel_id = channel.id;
    let to_site = |upload_id: i64, a: Acc| {
        let (k, o) = channel.to_site(upload_id, site);
        if (k, o) == (1.0, 0.0) {
            return a;
        }
        Acc { n: a.n, min: a.min * k + o, max: a.max * k + o, sum: a.sum * k + o * f64::from(a.n) }
    };
    let mut add = |t: i64, a: Acc| {
        let b = from_ms + (t - from_ms).div_euclid(bucket) * bucket;
        match out.last_mut() {
            Some((bt, acc)) if *bt == b => acc.merge(&a),
            _ => out.push((b, a)),
        }
    };
    if use_hours {
        let rows = sqlx::query(
            "SELECT r.hour_ms, r.upload_id, r.n, r.min, r.max, r.sum FROM rollup_hour r JOIN upload u ON u.id = r.upload_id \
             AND u.state = 'complete' WHERE r.channel_id = ? AND r.hour_ms >= ? AND r.hour_ms <= ? ORDER BY r.hour_ms",
        )
        .bind(channel_id)
        .bind(from_ms - from_ms.rem_euclid(HOUR_MS))
        .bind(to_ms)
        .fetch_all(pool)
        .await?;
        for r in rows {
            let n: i64 = r.get("n");
            add(
                r.get("hour_ms"),
                to_site(
                    r.get("upload_id"),
                    Acc { n: n as u32, min: r.get("min"), max: r.get("max"), sum: r.get("sum") },
                ),
            );
        }
    } else {
        let rows = sqlx::query(
            "SELECT r.day_ms, r.upload_id, r.data FROM rollup_minute r JOIN upload u ON u.id = r.upload_id AND u.state = 'complete' \
             WHERE r.channel_id = ? AND r.day_ms >= ? AND r.day_ms <= ? ORDER BY r.day_ms",
        )
        .bind(channel_id)
        .bind(from_ms - from_ms.rem_euclid(DAY_MS))
        .bind(to_ms)
        .fetch_all(pool)
        .await?;
        for r in rows {
            let day: i64 = r.get("day_ms");
            let upload_id: i64 = r.get("upload_id");
            let blob: Vec<u8> = r.get("data");
            decode_day(day, &blob, |t, a| {
                if t >= from_ms && t <= to_ms {
                    add(t, to_site(upload_id, a))
                }
            })?;
        }
    }
    Ok(out.into_iter().map(|(t, a)| ChartPoint { t_ms: t, min: a.min, mean: a.mean(), max: a.max }).collect())
}

/// The power an energy counter stands for (W), in the buckets of [`chart_series`] over
/// `from_ms..=to_ms`: its readings from the chunks (a counter's rollups hold counter values, not
/// power) through `core::series::CounterAligner`, the frame's rule (a rise over the time between two
/// readings, nothing across a reset or across a gap over three of its upload's logging intervals).
/// Each bucket's mean power is its min, mean and max alike (a counter says nothing of the spread
/// within a bucket); a bucket logged for part of its length keeps its mean over that part, and a
/// bucket with no rise logged is left out, as a power channel's bucket without readings is.
pub async fn counter_power_series(
    pool: &SqlitePool,
    site: &SiteAir,
    channel: &ChannelInfo,
    from_ms: i64,
    to_ms: i64,
    max_points: usize,
) -> Result<Vec<ChartPoint>, StoreError> {
    let bucket = chart_bucket_ms(from_ms, to_ms, max_points);
    let len = ((to_ms - from_ms).max(0) / bucket + 1) as usize;
    let grid = Grid { start_ms: from_ms, step_ms: bucket, len };
    let mut aligner = CounterAligner::new(grid, 0);
    let mut after = (i64::MIN, i64::MIN);
    loop {
        let page = chunk_page(pool, channel.id, (from_ms, to_ms), after).await?;
        let Some(&(t, u, _)) = page.last() else { break };
        after = (t, u);
        let full = page.len() as i64 == CHUNK_PAGE;
        let page: Vec<Piece> = page
            .into_iter()
            .map(|(_, u, b)| (channel.to_site(u, site), 3 * channel.upload_interval_ms(u), b))
            .collect();
        aligner = tokio::task::spawn_blocking(move || -> Result<CounterAligner, StoreError> {
            let mut decoder = chunk::Decoder::default();
            for ((k, o), gap, b) in &page {
                aligner.set_max_gap(*gap);
                let (times, values) = decoder.decode(b)?;
                for (&t, &v) in times.iter().zip(values.iter()) {
                    aligner.push(t, v * k + o);
                }
            }
            Ok(aligner)
        })
        .await
        .map_err(|e| StoreError::Damaged { path: "chart".into(), detail: e.to_string() })??;
        if !full {
            break;
        }
    }
    let (values, partial) = aligner.finish_with_partial();
    let mut part = partial.iter().peekable();
    let mut out = Vec::new();
    for (i, v) in values.iter().enumerate() {
        while part.peek().is_some_and(|p| (p.bin as usize) < i) {
            part.next();
        }
        let mean = match part.peek() {
            Some(p) if p.bin as usize == i => p.mean,
            _ => *v,
        };
        if mean.is_finite() {
            let w = f64::from(mean);
            out.push(ChartPoint { t_ms: grid.bin_start_ms(i), min: w, mean: w, max: w });
        }
    }
    Ok(out)
}

/// One channel's readings from one upload, from the hourly rollups: how many were stored and the
/// arithmetic mean, least and greatest of their SI values (what was stored, not a time average).
#[derive(Debug, Clone, Serialize)]
pub struct UploadChannelStats {
    pub channel_id: i64,
    pub quantity: String,
    pub compressor_tag: Option<String>,
    pub label: String,
    pub unit: String,
    pub readings: i64,
    pub mean_si: f64,
    pub min_si: f64,
    pub max_si: f64,
}

/// The channels upload `upload_id` of audit `audit_id` wrote readings to, with their statistics;
/// `None` when the audit has no such complete upload.
pub async fn upload_channel_stats(
    pool: &SqlitePool,
    audit_id: i64,
    upload_id: i64,
) -> Result<Option<Vec<UploadChannelStats>>, StoreError> {
    let found: Option<i64> =
        sqlx::query_scalar("SELECT id FROM upload WHERE id = ? AND audit_id = ? AND state = 'complete'")
            .bind(upload_id)
            .bind(audit_id)
            .fetch_optional(pool)
            .await?;
    if found.is_none() {
        return Ok(None);
    }
    let rows = sqlx::query(
        "SELECT c.id, c.quantity, k.tag, c.label, c.unit, sum(r.n) AS n, sum(r.sum) AS total, \
         min(r.min) AS lo, max(r.max) AS hi FROM rollup_hour r JOIN channel c ON c.id = r.channel_id \
         LEFT JOIN compressor k ON k.id = c.compressor_id \
         WHERE r.upload_id = ? GROUP BY c.id ORDER BY c.quantity, k.tag, c.label",
    )
    .bind(upload_id)
    .fetch_all(pool)
    .await?;
    Ok(Some(
        rows.iter()
            .map(|r| {
                let n: i64 = r.get("n");
                let total: f64 = r.get("total");
                UploadChannelStats {
                    channel_id: r.get("id"),
                    quantity: r.get("quantity"),
                    compressor_tag: r.get("tag"),
                    label: r.get("label"),
                    unit: r.get("unit"),
                    readings: n,
                    mean_si: if n > 0 { total / n as f64 } else { f64::NAN },
                    min_si: r.get("lo"),
                    max_si: r.get("hi"),
                }
            })
            .collect(),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::chunk::Precision;

    /// A channel of more chunks than one page (200 chunks of 10 readings, four pages) is aligned
    /// whole and in order: a ramp of one unit a second, integrated as straight lines between
    /// readings (`core::series`), has the mean `i + 0.5` in bin `i` of a 1 s grid; a page lost,
    /// repeated or out of order would leave a gap (missing bins) or a wrong mean.
    #[tokio::test]
    async fn a_channel_of_many_pages_is_aligned_whole_and_in_order() {
        let dir = std::env::temp_dir().join(format!("airledger-pages-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let (pool, _lock) = crate::store::open(&dir.join("p.sqlite")).await.unwrap();
        for sql in [
            "INSERT INTO audit (id, name, created_at) VALUES (1, 'a', '2026-01-01T00:00:00Z')",
            "INSERT INTO upload (id, audit_id, filename, sha256, bytes, state, mapping, created_at) \
             VALUES (1, 1, 'f.csv', 'x', 0, 'complete', '{}', '2026-01-01T00:00:00Z')",
            "INSERT INTO channel (id, audit_id, quantity, label, unit) VALUES (1, 1, 'flow', 'q', 'm3_min')",
        ] {
            sqlx::query(sql).execute(&pool).await.unwrap();
        }
        let (chunks, per) = (200i64, 10i64);
        for k in 0..chunks {
            let times: Vec<i64> = (0..per).map(|j| (k * per + j) * 1000).collect();
            let values: Vec<f64> = times.iter().map(|&t| (t / 1000) as f64).collect();
            sqlx::query("INSERT INTO chunk (channel_id, t_start_ms, upload_id, t_end_ms, n, data) VALUES (1, ?, 1, ?, ?, ?)")
                .bind(times[0])
                .bind(times[times.len() - 1])
                .bind(per)
                .bind(chunk::encode(&times, &values, Precision::F32))
                .execute(&pool)
                .await
                .unwrap();
        }
        assert!(chunks > 3 * CHUNK_PAGE, "the channel spans several pages");
        let n = chunks * per;
        let info = ChannelInfo {
            id: 1,
            quantity: "flow".into(),
            compressor_id: None,
            compressor_tag: None,
            label: "q".into(),
            unit: "m3_min".into(),
            point: None,
            first_ms: 0,
            last_ms: (n - 1) * 1000,
            readings: n,
            parts: vec![],
        };
        let site = SiteAir::new(101.325, 20.0);
        let frame = load_frame(&pool, &site, &[info], &[], None).await.unwrap().expect("a frame");
        assert_eq!((frame.grid.step_ms, frame.grid.len), (1000, (n - 1) as usize));
        let values = &frame.columns[0].values;
        for (i, v) in values.iter().enumerate() {
            assert!((v - (i as f32 + 0.5)).abs() < 1e-3, "bin {i}: {v}");
        }
        pool.close().await;
        let _ = std::fs::remove_dir_all(&dir);
    }

    /// A window reads from the last chunk of each upload that starts before it: a ramp of one unit
    /// a second logged by two uploads (0-999 s and 1000-1999 s, chunks of 10 readings) has the
    /// mean `t + 0.5` in the 1 s bin starting at `t` in any window, its first bins too, which only
    /// the chunk begun before the window holds (a window from 995 s needs upload 1's chunk from
    /// 990 s; one from 1505 s upload 2's chunk from 1500 s, upload 1 then being all before it).
    #[tokio::test]
    async fn a_window_reads_the_chunk_begun_before_it_in_each_upload() {
        let dir = std::env::temp_dir().join(format!("airledger-window-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let (pool, _lock) = crate::store::open(&dir.join("w.sqlite")).await.unwrap();
        for sql in [
            "INSERT INTO audit (id, name, created_at) VALUES (1, 'a', '2026-01-01T00:00:00Z')",
            "INSERT INTO upload (id, audit_id, filename, sha256, bytes, state, mapping, created_at) \
             VALUES (1, 1, 'a.csv', 'x', 0, 'complete', '{}', '2026-01-01T00:00:00Z')",
            "INSERT INTO upload (id, audit_id, filename, sha256, bytes, state, mapping, created_at) \
             VALUES (2, 1, 'b.csv', 'y', 0, 'complete', '{}', '2026-01-01T00:00:00Z')",
            "INSERT INTO channel (id, audit_id, quantity, label, unit) VALUES (1, 1, 'flow', 'q', 'm3_min')",
        ] {
            sqlx::query(sql).execute(&pool).await.unwrap();
        }
        let per = 10i64;
        for k in 0..200i64 {
            let times: Vec<i64> = (0..per).map(|j| (k * per + j) * 1000).collect();
            let values: Vec<f64> = times.iter().map(|&t| (t / 1000) as f64).collect();
            sqlx::query("INSERT INTO chunk (channel_id, t_start_ms, upload_id, t_end_ms, n, data) VALUES (1, ?, ?, ?, ?, ?)")
                .bind(times[0])
                .bind(if k < 100 { 1 } else { 2 })
                .bind(times[times.len() - 1])
                .bind(per)
                .bind(chunk::encode(&times, &values, Precision::F32))
                .execute(&pool)
                .await
                .unwrap();
        }
        let part = |upload_id| UploadPart {
            upload_id,
            form: StoredForm::measured(Basis::Site),
            interval_ms: Some(1000),
        };
        let info = ChannelInfo {
            id: 1,
            quantity: "flow".into(),
            compressor_id: None,
            compressor_tag: None,
            label: "q".into(),
            unit: "m3_min".into(),
            point: None,
            first_ms: 0,
            last_ms: 1_999_000,
            readings: 2000,
            parts: vec![part(1), part(2)],
        };
        let site = SiteAir::new(101.325, 20.0);
        for (from_s, to_s) in [(995, 1010), (1505, 1600), (0, 30)] {
            let window = Some((from_s * 1000, to_s * 1000));
            let frame = load_frame(&pool, &site, std::slice::from_ref(&info), &[], window)
                .await
                .unwrap()
                .expect("a frame");
            assert_eq!((frame.grid.start_ms, frame.grid.step_ms), (from_s * 1000, 1000));
            assert_eq!(frame.grid.len, (to_s - from_s) as usize);
            for (i, v) in frame.columns[0].values.iter().enumerate() {
                let want = (from_s + i as i64) as f32 + 0.5;
                assert!((v - want).abs() < 1e-3, "window from {from_s} s, bin {i}: {v} against {want}");
            }
        }
        pool.close().await;
        let _ = std::fs::remove_dir_all(&dir);
    }
}
