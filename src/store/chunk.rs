/*!
The chunk codec: how one channel's readings are packed into one BLOB.

A chunk holds up to [`CHUNK_READINGS`] readings of one channel, time-sorted. Layout (all integers
LEB128 varints, signed ones zigzag-coded):

```text
u8  version (1)
u8  flags: bit0 = body deflated
body:
  varint n
  times:  zigzag t0_ms, u8 mode; mode 0 = regular (varint step_ms), mode 1 = zigzag delta-of-delta
  values: u8 precision (0 = f32, 1 = f64), u8 coding:
          0 = decimal: u8 d, zigzag deltas of round(v * 10^d)    (only when every value round-trips)
          1 = ordered bits: zigzag deltas of the order-preserving integer image of the float bits
```

Both value codings are lossless at the stored precision: a decoded value is bit-for-bit the f32 (or
f64) that was encoded. Measured values are kept at f32, energy counters at f64 (exact to the logged
digits). Logger data changes slowly between readings, so deltas are small and most varints are one
or two bytes; deflate then takes out what repeats.
*/

use miniz_oxide::deflate::compress_to_vec;
use miniz_oxide::inflate::core::{decompress, inflate_flags, DecompressorOxide};
use miniz_oxide::inflate::TINFLStatus;

use super::varint::{self, VarintError};

/// Readings per chunk: large enough that per-row overhead vanishes, small enough to decode fast.
pub const CHUNK_READINGS: usize = 8192;

/// The precision a channel is stored at.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Precision {
    F32,
    F64,
}

#[derive(Debug, thiserror::Error, PartialEq)]
pub enum ChunkError {
    /// The BLOB does not follow the layout above (truncated, unknown version or coding).
    #[error("corrupt chunk: {0}")]
    Corrupt(&'static str),
}

struct Reader<'a> {
    buf: &'a [u8],
    pos: usize,
}

fn corrupt(e: VarintError) -> ChunkError {
    match e {
        VarintError::Truncated => ChunkError::Corrupt("truncated"),
        VarintError::TooLong => ChunkError::Corrupt("varint too long"),
    }
}

impl Reader<'_> {
    #[inline]
    fn u8(&mut self) -> Result<u8, ChunkError> {
        let b = *self.buf.get(self.pos).ok_or(ChunkError::Corrupt("truncated"))?;
        self.pos += 1;
        Ok(b)
    }
    #[inline]
    fn varint(&mut self) -> Result<u64, ChunkError> {
        varint::get(self.buf, &mut self.pos).map_err(corrupt)
    }
    #[inline]
    fn svarint(&mut self) -> Result<i64, ChunkError> {
        varint::get_signed(self.buf, &mut self.pos).map_err(corrupt)
    }
}

/// Order-preserving integer image of float bits (so that close floats have close integers); -0.0
/// maps to -1 and 0.0 to 0, so both survive.
fn ordered_f32(v: f32) -> i64 {
    let b = v.to_bits() as i32;
    i64::from(if b < 0 { i32::MIN - b - 1 } else { b })
}
fn from_ordered_f32(o: i64) -> f32 {
    let o = o as i32;
    f32::from_bits((if o < 0 { i32::MIN - (o + 1) } else { o }) as u32)
}
fn ordered_f64(v: f64) -> i64 {
    let b = v.to_bits() as i64;
    if b < 0 {
        i64::MIN - b - 1
    } else {
        b
    }
}
fn from_ordered_f64(o: i64) -> f64 {
    f64::from_bits((if o < 0 { i64::MIN - (o + 1) } else { o }) as u64)
}

/// The smallest number of decimals `d <= 6` with which every value round-trips exactly at the
/// given precision, if any.
fn decimal_scale(values: &[f64], precision: Precision) -> Option<u32> {
    'scale: for d in 0..=6u32 {
        let k = 10f64.powi(d as i32);
        for &v in values {
            let s = (v * k).round();
            if !s.is_finite() || s.abs() > 9.0e15 {
                continue 'scale;
            }
            // Back from the integer actually stored (so that -0.0 is not mistaken for 0.0).
            let back = (s as i64) as f64 / k;
            let same = match precision {
                Precision::F32 => (back as f32).to_bits() == (v as f32).to_bits(),
                Precision::F64 => back.to_bits() == v.to_bits(),
            };
            if !same {
                continue 'scale;
            }
        }
        return Some(d);
    }
    None
}

fn encode_times(out: &mut Vec<u8>, times: &[i64]) {
    varint::put_signed(out, times[0]);
    let step = if times.len() > 1 { times[1] - times[0] } else { 0 };
    if step >= 0 && times.windows(2).all(|w| w[1] - w[0] == step) {
        out.push(0);
        varint::put(out, step as u64);
    } else {
        out.push(1);
        let mut prev_delta = 0i64;
        for w in times.windows(2) {
            let delta = w[1] - w[0];
            varint::put_signed(out, delta - prev_delta);
            prev_delta = delta;
        }
    }
}

/// Encode a chunk. `times` and `values` have the same non-zero length; times are sorted.
pub fn encode(times: &[i64], values: &[f64], precision: Precision) -> Vec<u8> {
    assert_eq!(times.len(), values.len(), "a chunk needs one time per value");
    assert!(!times.is_empty(), "a chunk holds at least one reading");
    let mut body = Vec::with_capacity(times.len() * 3 + 16);
    varint::put(&mut body, times.len() as u64);
    encode_times(&mut body, times);
    body.push(match precision {
        Precision::F32 => 0,
        Precision::F64 => 1,
    });
    if let Some(d) = decimal_scale(values, precision) {
        body.push(0);
        body.push(d as u8);
        let k = 10f64.powi(d as i32);
        let mut prev = 0i64;
        for &v in values {
            let s = (v * k).round() as i64;
            varint::put_signed(&mut body, s.wrapping_sub(prev));
            prev = s;
        }
    } else {
        body.push(1);
        let mut prev = 0i64;
        for &v in values {
            let o = match precision {
                Precision::F32 => ordered_f32(v as f32),
                Precision::F64 => ordered_f64(v),
            };
            varint::put_signed(&mut body, o.wrapping_sub(prev));
            prev = o;
        }
    }
    // Level 2, not 1: on the bench's 64 M readings the blobs keep 16 % smaller and inflate 19 %
    // faster (the summary's frame inflates every one), for 12 % more CPU in this deflate
    // (benches/README.md, 2026-12-05).
    let packed = compress_to_vec(&body, 2);
    let mut out = Vec::with_capacity(body.len().min(packed.len()) + 2);
    out.push(1);
    if packed.len() < body.len() {
        out.push(1);
        out.extend_from_slice(&packed);
    } else {
        out.push(0);
        out.extend_from_slice(&body);
    }
    out
}

/// The most bytes a chunk's body may inflate to (a damaged or hostile blob stops there).
const MAX_BODY_BYTES: usize = CHUNK_READINGS * 24 + 64;

/// Decode a chunk, calling `each(t_ms, value)` for every reading in time order.
pub fn decode(blob: &[u8], mut each: impl FnMut(i64, f64)) -> Result<usize, ChunkError> {
    let mut d = Decoder::default();
    let (times, values) = d.decode(blob)?;
    for (&t, &v) in times.iter().zip(values.iter()) {
        each(t, v);
    }
    Ok(times.len())
}

/// Decodes chunk after chunk into buffers it keeps: the inflater's state, the body and the
/// readings are allocated once for a channel's thousands of chunks, not once a chunk.
#[derive(Default)]
pub struct Decoder {
    inflater: Box<DecompressorOxide>,
    body: Vec<u8>,
    times: Vec<i64>,
    values: Vec<f64>,
}

impl Decoder {
    /// A chunk's readings: their times (ms) and values, in time order. The values may be changed
    /// in place (to SI, say) before the next chunk is decoded.
    pub fn decode(&mut self, blob: &[u8]) -> Result<(&[i64], &mut [f64]), ChunkError> {
        if blob.len() < 2 || blob[0] != 1 {
            return Err(ChunkError::Corrupt("unknown version"));
        }
        let body: &[u8] = if blob[1] & 1 == 1 {
            if self.body.len() < MAX_BODY_BYTES {
                self.body.resize(MAX_BODY_BYTES, 0);
            }
            self.inflater.init();
            // The whole stream at once into a buffer that holds any valid body: no window copies.
            let flags = inflate_flags::TINFL_FLAG_USING_NON_WRAPPING_OUTPUT_BUF;
            let (status, _, len) = decompress(&mut self.inflater, &blob[2..], &mut self.body, 0, flags);
            if status != TINFLStatus::Done {
                return Err(ChunkError::Corrupt("deflate"));
            }
            &self.body[..len]
        } else {
            &blob[2..]
        };
        read_body(body, &mut self.times, &mut self.values)?;
        Ok((&self.times, &mut self.values))
    }
}

/// The readings of an inflated body into `times` and `values` (both cleared first).
fn read_body(body: &[u8], times: &mut Vec<i64>, values: &mut Vec<f64>) -> Result<(), ChunkError> {
    times.clear();
    values.clear();
    let mut r = Reader { buf: body, pos: 0 };
    let n = r.varint()? as usize;
    if n == 0 || n > CHUNK_READINGS * 4 {
        return Err(ChunkError::Corrupt("reading count"));
    }
    // Times first: the value section follows the time section.
    let t0 = r.svarint()?;
    times.push(t0);
    match r.u8()? {
        0 => {
            let step = r.varint()? as i64;
            times.extend((1..n).map(|i| t0 + step * i as i64));
        }
        1 => {
            let mut t = t0;
            let mut delta = 0i64;
            for _ in 1..n {
                delta += r.svarint()?;
                t += delta;
                times.push(t);
            }
        }
        _ => return Err(ChunkError::Corrupt("time mode")),
    }
    let precision = r.u8()?;
    let coding = r.u8()?;
    // Filled in place: a push per value costs a capacity check in the loop.
    values.resize(n, 0.0);
    match (coding, precision) {
        (0, p) if p <= 1 => {
            let d = r.u8()?;
            if d > 6 {
                return Err(ChunkError::Corrupt("decimal scale"));
            }
            let k = 10f64.powi(i32::from(d));
            let mut s = 0i64;
            for out in values.iter_mut() {
                s = s.wrapping_add(r.svarint()?);
                let v = s as f64 / k;
                *out = if p == 0 { f64::from(v as f32) } else { v };
            }
        }
        (1, 0) => {
            let mut o = 0i64;
            for out in values.iter_mut() {
                o = o.wrapping_add(r.svarint()?);
                *out = f64::from(from_ordered_f32(o));
            }
        }
        (1, 1) => {
            let mut o = 0i64;
            for out in values.iter_mut() {
                o = o.wrapping_add(r.svarint()?);
                *out = from_ordered_f64(o);
            }
        }
        _ => return Err(ChunkError::Corrupt("value coding")),
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn round_trip(times: &[i64], values: &[f64], p: Precision) -> (Vec<i64>, Vec<f64>) {
        let blob = encode(times, values, p);
        let (mut t, mut v) = (vec![], vec![]);
        let n = decode(&blob, |a, b| {
            t.push(a);
            v.push(b);
        })
        .unwrap();
        assert_eq!(n, times.len());
        (t, v)
    }

    #[test]
    fn regular_decimal_data_packs_below_two_bytes_per_reading() {
        // One hour of 1 s kW readings with 0.1 kW resolution, as a power logger writes them.
        let times: Vec<i64> = (0..3600).map(|i| 1_772_000_000_000 + i * 1000).collect();
        let values: Vec<f64> = (0..3600)
            .map(|i| ((55_000.0 + 300.0 * ((i as f64) / 40.0).sin()) / 100.0).round() * 100.0)
            .collect();
        let blob = encode(&times, &values, Precision::F32);
        assert!(blob.len() < 2 * 3600, "{} bytes", blob.len());
        let (t, v) = round_trip(&times, &values, Precision::F32);
        assert_eq!(t, times);
        for (a, b) in v.iter().zip(&values) {
            assert_eq!(*a as f32, *b as f32);
        }
    }

    #[test]
    fn counters_keep_f64_exactly() {
        let times = vec![0, 60_000, 120_000, 180_000];
        let values = vec![123_456_789.5 * 3.6e6, 123_456_790.25 * 3.6e6, 1.0e12 + 0.1, 0.0];
        let (_, v) = round_trip(&times, &values, Precision::F64);
        assert_eq!(v, values);
    }

    proptest! {
        #[test]
        fn any_f32_values_and_sorted_times_round_trip(
            start in -1_000_000_000_000i64..4_000_000_000_000,
            steps in proptest::collection::vec(0i64..100_000, 1..300),
            values in proptest::collection::vec(proptest::num::f32::NORMAL | proptest::num::f32::ZERO, 300),
        ) {
            let mut times = vec![start];
            for s in &steps { let last = *times.last().unwrap(); times.push(last + s); }
            let values: Vec<f64> = values.iter().take(times.len()).map(|&x| f64::from(x)).collect();
            let times = &times[..values.len()];
            let (t, v) = round_trip(times, &values, Precision::F32);
            prop_assert_eq!(t, times.to_vec());
            for (a, b) in v.iter().zip(&values) {
                prop_assert_eq!((*a as f32).to_bits(), (*b as f32).to_bits());
            }
        }

        #[test]
        fn any_f64_values_round_trip_bit_for_bit(values in proptest::collection::vec(any::<f64>().prop_filter("finite", |x| x.is_finite()), 1..200)) {
            let times: Vec<i64> = (0..values.len() as i64).map(|i| i * 5000).collect();
            let (_, v) = round_trip(&times, &values, Precision::F64);
            for (a, b) in v.iter().zip(&values) {
                prop_assert_eq!(a.to_bits(), b.to_bits());
            }
        }
    }

    #[test]
    fn known_chunks_encode_to_the_bytes_of_the_documented_layout() {
        // By hand from the layout in the module doc. Regular times, decimal values at f32:
        // version 1, flags 0 (deflate would not be shorter), n = 3, t0 = 1000 (zigzag 2000 =
        // d0 0f), mode 0, step 1000 (e8 07), precision 0, coding 0, d = 1, deltas of 15, 25, -5:
        // 15, 10, -30 (zigzag 30, 20, 59).
        let blob = encode(&[1000, 2000, 3000], &[1.5, 2.5, -0.5], Precision::F32);
        assert_eq!(
            blob,
            [0x01, 0x00, 0x03, 0xd0, 0x0f, 0x00, 0xe8, 0x07, 0x00, 0x00, 0x01, 0x1e, 0x14, 0x3b]
        );
        // Irregular times (delta-of-delta 10, 10: zigzag 20, 20) and a value with no short decimal
        // form, 2^-20, whose f32 bits are 0x3580_0000 (IEEE 754 binary32: exponent 127 - 20 = 0x6b,
        // mantissa 0): ordered-bits coding, the first delta zigzag 0x6b00_0000 (80 80 80 d8 06),
        // then 0, 0.
        let v = 2f64.powi(-20);
        let blob = encode(&[0, 10, 30], &[v, v, v], Precision::F32);
        assert_eq!(
            blob,
            [0x01, 0x00, 0x03, 0x00, 0x01, 0x14, 0x14, 0x00, 0x01, 0x80, 0x80, 0x80, 0xd8, 0x06, 0x00, 0x00]
        );
        let (t, back) = round_trip(&[0, 10, 30], &[v, v, v], Precision::F32);
        assert_eq!((t, back), (vec![0, 10, 30], vec![v, v, v]));
    }

    #[test]
    fn a_damaged_blob_is_an_error_not_a_panic() {
        let blob = encode(&[1, 2, 3], &[1.0, 2.0, 3.0], Precision::F32);
        for cut in 0..blob.len() {
            let _ = decode(&blob[..cut], |_, _| {});
        }
        assert!(decode(&[9, 0, 1], |_, _| {}).is_err());
    }
}
