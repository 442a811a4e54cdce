/*!
LEB128 varints and zigzag signed integers: the one integer codec of the chunk and rollup BLOBs.

An unsigned integer is written seven bits at a time, least significant group first, with the high
bit of each byte set when more bytes follow (the unsigned LEB128 of the DWARF 4 standard, section
7.6, and the varint of Protocol Buffers). A signed integer is first mapped to an unsigned one by
zigzag coding, `(v << 1) ^ (v >> 63)`, so that numbers near zero of either sign stay short
(0 -> 0, -1 -> 1, 1 -> 2, -2 -> 3 ...; the Protocol Buffers encoding guide, "sint64").
*/

/// Why a varint could not be read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum VarintError {
    /// The buffer ended inside the varint.
    Truncated,
    /// More than ten bytes: no u64 is that long.
    TooLong,
}

/// Append `v` as an unsigned varint.
#[inline]
pub fn put(out: &mut Vec<u8>, mut v: u64) {
    while v >= 0x80 {
        out.push((v as u8) | 0x80);
        v >>= 7;
    }
    out.push(v as u8);
}

/// Append `v` zigzag-coded as a varint.
#[inline]
pub fn put_signed(out: &mut Vec<u8>, v: i64) {
    put(out, zigzag(v))
}

/// Signed to unsigned, small magnitudes to small numbers.
#[inline]
pub fn zigzag(v: i64) -> u64 {
    ((v << 1) ^ (v >> 63)) as u64
}

/// The inverse of [`zigzag`].
#[inline]
pub fn unzigzag(v: u64) -> i64 {
    ((v >> 1) as i64) ^ -((v & 1) as i64)
}

/// Read an unsigned varint at `*pos`, moving `*pos` past it.
#[inline]
pub fn get(buf: &[u8], pos: &mut usize) -> Result<u64, VarintError> {
    // One byte, the most common length (small deltas of slowly changing readings), in place.
    if let Some(&b) = buf.get(*pos) {
        if b < 0x80 {
            *pos += 1;
            return Ok(u64::from(b));
        }
    }
    get_long(buf, pos)
}

/// [`get`] for a varint of any length.
fn get_long(buf: &[u8], pos: &mut usize) -> Result<u64, VarintError> {
    let mut v = 0u64;
    let mut shift = 0;
    loop {
        let b = *buf.get(*pos).ok_or(VarintError::Truncated)?;
        *pos += 1;
        if shift > 63 {
            return Err(VarintError::TooLong);
        }
        v |= u64::from(b & 0x7f) << shift;
        if b & 0x80 == 0 {
            return Ok(v);
        }
        shift += 7;
    }
}

/// Read a zigzag-coded varint at `*pos`, moving `*pos` past it.
#[inline]
pub fn get_signed(buf: &[u8], pos: &mut usize) -> Result<i64, VarintError> {
    get(buf, pos).map(unzigzag)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn encoded(v: u64) -> Vec<u8> {
        let mut out = Vec::new();
        put(&mut out, v);
        out
    }

    #[test]
    fn unsigned_varints_are_the_leb128_of_the_dwarf_standard() {
        // The DWARF 4 standard, section 7.6, figure 22 (examples of unsigned LEB128), from memory;
        // each checks by hand (12857 = 100 x 128 + 57): 2 -> 02, 127 -> 7f, 128 -> 80 01,
        // 129 -> 81 01, 130 -> 82 01, 12857 -> b9 64.
        for (v, bytes) in [
            (2u64, vec![0x02]),
            (127, vec![0x7f]),
            (128, vec![0x80, 0x01]),
            (129, vec![0x81, 0x01]),
            (130, vec![0x82, 0x01]),
            (12857, vec![0xb9, 0x64]),
        ] {
            assert_eq!(encoded(v), bytes, "{v}");
        }
        // Protocol Buffers encoding guide: 150 -> 96 01.
        assert_eq!(encoded(150), [0x96, 0x01]);
        assert_eq!(encoded(0), [0x00]);
        // u64::MAX takes ten bytes: nine full groups of seven bits and a last 1.
        let mut max = vec![0xff; 9];
        max.push(0x01);
        assert_eq!(encoded(u64::MAX), max);
    }

    #[test]
    fn zigzag_maps_small_magnitudes_to_small_numbers() {
        // Protocol Buffers encoding guide, sint32/sint64 table: 0 -> 0, -1 -> 1, 1 -> 2, -2 -> 3,
        // 0x7fffffff -> 0xfffffffe, -0x80000000 -> 0xffffffff.
        assert_eq!(zigzag(0), 0);
        assert_eq!(zigzag(-1), 1);
        assert_eq!(zigzag(1), 2);
        assert_eq!(zigzag(-2), 3);
        assert_eq!(zigzag(0x7fff_ffff), 0xffff_fffe);
        assert_eq!(zigzag(-0x8000_0000), 0xffff_ffff);
        // The 64-bit edges.
        assert_eq!(zigzag(i64::MAX), u64::MAX - 1);
        assert_eq!(zigzag(i64::MIN), u64::MAX);
    }

    #[test]
    fn signed_values_round_trip_at_the_edges() {
        let values =
            [0, 1, -1, 63, -64, 64, -65, i64::from(i32::MAX), i64::from(i32::MIN), i64::MAX, i64::MIN];
        let mut buf = Vec::new();
        for &v in &values {
            put_signed(&mut buf, v);
        }
        let mut pos = 0;
        for &v in &values {
            assert_eq!(get_signed(&buf, &mut pos), Ok(v));
        }
        assert_eq!(pos, buf.len());
        // One byte for -64..=63, two from there on.
        assert_eq!(buf[..4], [0x00, 0x02, 0x01, 0x7e]);
    }

    #[test]
    fn unsigned_values_round_trip_at_the_edges() {
        for v in [0, 1, 127, 128, 16_383, 16_384, u64::from(u32::MAX), u64::MAX - 1, u64::MAX] {
            let buf = encoded(v);
            let mut pos = 0;
            assert_eq!(get(&buf, &mut pos), Ok(v));
            assert_eq!(pos, buf.len());
        }
    }

    #[test]
    fn truncated_and_overlong_varints_are_errors() {
        let mut pos = 0;
        assert_eq!(get(&[], &mut pos), Err(VarintError::Truncated));
        let mut pos = 0;
        assert_eq!(get(&[0x80, 0x80], &mut pos), Err(VarintError::Truncated));
        // Eleven bytes with the continuation bit: longer than any u64.
        let mut pos = 0;
        assert_eq!(get(&[0x80; 11], &mut pos), Err(VarintError::TooLong));
    }
}
