/*!
Local civil times to UTC: fixed offsets and IANA zones (jiff's bundled database), with the
daylight-saving rule of the module doc of [`super`], caching the offset per local civil hour.
*/

use super::formats::{Cursor, Written};
use jiff::tz::{AmbiguousOffset, TimeZone};

const MS_PER_HOUR: i64 = 3_600_000;

/// How a daylight-saving case was resolved.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DstResolution {
    /// Ambiguous (fold), read with the earlier (summer-time) offset.
    AmbiguousEarlier,
    /// Ambiguous (fold), read with the later (standard-time) offset after the step back.
    AmbiguousLater,
    /// Impossible (gap), shifted forward by the gap.
    GapShiftedForward,
}

/// One daylight-saving case met while parsing.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DstCase {
    pub local_ms: i64,
    pub offset_s: i32,
    pub resolution: DstResolution,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Off {
    Unique(i32),
    Gap { before: i32 },
    Fold { before: i32, after: i32 },
}

fn off_of(a: AmbiguousOffset) -> Off {
    match a {
        AmbiguousOffset::Unambiguous { offset } => Off::Unique(offset.seconds()),
        AmbiguousOffset::Gap { before, .. } => Off::Gap { before: before.seconds() },
        AmbiguousOffset::Fold { before, after } => {
            Off::Fold { before: before.seconds(), after: after.seconds() }
        }
    }
}

/// A time zone of a mapping.
#[derive(Debug, Clone)]
pub enum Zone {
    Fixed(i32),
    Named(TimeZone),
}

impl Zone {
    /// `UTC`/`Z`, a fixed offset (`+01:00`, `-0600`, `UTC+01:00`) or an IANA name.
    pub fn parse(name: &str) -> Result<Self, String> {
        let n = name.trim();
        if n.eq_ignore_ascii_case("utc") || n.eq_ignore_ascii_case("z") || n == "GMT" {
            return Ok(Self::Fixed(0));
        }
        let off_text = n
            .strip_prefix("UTC")
            .or_else(|| n.strip_prefix("utc"))
            .or_else(|| n.strip_prefix("GMT"))
            .unwrap_or(n);
        if off_text.starts_with(['+', '-']) {
            let mut c = Cursor { s: off_text.as_bytes(), i: 0 };
            return match c.offset() {
                Some(o) if c.i == off_text.len() => Ok(Self::Fixed(o)),
                _ => Err(format!("cannot read utc offset {name:?}")),
            };
        }
        TimeZone::get(n)
            .map(Self::Named)
            .map_err(|_| format!("unknown time zone {name:?}: choose an IANA name from the list, such as America/Chicago, or UTC or a fixed offset such as +01:00"))
    }
}

/// Resolves local civil times to UTC with the daylight-saving rule of the module doc, caching the
/// zone's offset per local civil hour.
#[derive(Debug, Clone)]
pub struct Resolver {
    zone: Zone,
    cache_hour: i64,
    /// `None`: the offset changes inside that hour; ask jiff per timestamp.
    cache: Option<Off>,
    fold: Option<FoldState>,
}

#[derive(Debug, Clone, Copy)]
struct FoldState {
    before: i32,
    after: i32,
    last_local_ms: i64,
    stepped_back: bool,
}

impl Resolver {
    pub fn new(zone: Zone) -> Self {
        Self { zone, cache_hour: i64::MIN, cache: None, fold: None }
    }

    fn lookup(tz: &TimeZone, local_ms: i64) -> Option<Off> {
        let dt = jiff::Timestamp::from_millisecond(local_ms).ok()?.to_zoned(TimeZone::UTC);
        Some(off_of(tz.to_ambiguous_timestamp(dt.datetime()).offset()))
    }

    /// UTC ms for a written timestamp, and the daylight-saving case if there was one.
    #[inline]
    pub fn resolve(&mut self, w: Written) -> Option<(i64, Option<DstCase>)> {
        let (local_ms, explicit) = match w {
            Written::Utc(ms) => return Some((ms, None)),
            Written::Local { local_ms, offset_s } => (local_ms, offset_s),
        };
        if let Some(o) = explicit {
            return Some((local_ms - o as i64 * 1000, None));
        }
        let tz = match &self.zone {
            Zone::Fixed(o) => return Some((local_ms - *o as i64 * 1000, None)),
            Zone::Named(tz) => tz,
        };
        let hour = local_ms.div_euclid(MS_PER_HOUR);
        if hour != self.cache_hour {
            let a = Self::lookup(tz, hour * MS_PER_HOUR)?;
            let b = Self::lookup(tz, hour * MS_PER_HOUR + MS_PER_HOUR - 1)?;
            self.cache_hour = hour;
            self.cache = (a == b).then_some(a);
        }
        let off = match self.cache {
            Some(o) => o,
            None => Self::lookup(tz, local_ms)?,
        };
        match off {
            Off::Unique(o) => {
                self.fold = None;
                Some((local_ms - o as i64 * 1000, None))
            }
            Off::Gap { before } => {
                self.fold = None;
                let case =
                    DstCase { local_ms, offset_s: before, resolution: DstResolution::GapShiftedForward };
                Some((local_ms - before as i64 * 1000, Some(case)))
            }
            Off::Fold { before, after } => {
                let st = match self.fold {
                    Some(mut st) if st.before == before && st.after == after => {
                        if local_ms < st.last_local_ms {
                            st.stepped_back = true;
                        }
                        st.last_local_ms = local_ms;
                        st
                    }
                    _ => FoldState { before, after, last_local_ms: local_ms, stepped_back: false },
                };
                self.fold = Some(st);
                let (o, resolution) = if st.stepped_back {
                    (after, DstResolution::AmbiguousLater)
                } else {
                    (before, DstResolution::AmbiguousEarlier)
                };
                Some((local_ms - o as i64 * 1000, Some(DstCase { local_ms, offset_s: o, resolution })))
            }
        }
    }
}
