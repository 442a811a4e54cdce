/*!
The original bytes of an upload, kept with it so that the file can be imported again with a
corrected mapping (`remap`) without being sent again.

The file is read in pieces of [`PIECE_BYTES`]; each piece is cut into column streams
(`columns`, a reversible transform on bytes), deflated on its own (level [`LEVEL`]) and stored as
one row of `upload_original`, so that keeping and restoring a file of any size holds at most a
couple of pieces in memory. A piece starts a fresh deflate stream, which costs next to nothing
against a single stream: deflate looks back only 32 KiB anyway. Restoring inflates the pieces in
order into a spool file and checks its SHA-256 against the upload's.

A piece stored with the column streams starts with the byte [`COLUMNS_MAGIC`] and a version byte;
pieces kept before (plain deflate of the raw bytes) start with a deflate block header, whose first
byte never has both of its block-type bits set (type 3 is reserved, RFC 1951 3.2.3), so 0xFE
cannot start one and both kinds read back.
*/

use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};

use miniz_oxide::deflate::compress_to_vec;
use miniz_oxide::inflate::decompress_to_vec_with_limit;
use sha2::{Digest, Sha256};
use sqlx::{Row, SqlitePool};

use super::ImportError;
use crate::store::{begin_write, StoreError};

/// Raw bytes per stored piece.
pub const PIECE_BYTES: usize = 1024 * 1024;

/// Deflate level, of the column streams. On the raw text level 6 (zlib's default) made an 82 MB
/// file's import 5.8 s against 1.0 s without originals (the bench, 2026-12-04) and level 1 1.24 s,
/// for 23.3 MB kept. The column streams at level 2 keep the bench's 8 M readings in 9.4 MB (1.18
/// bytes a reading) for the CPU time plain deflate took at level 1 (0.44 s against 0.37 s at level
/// 1, 2.90 bytes a reading); level 3 gives 1.03 bytes a reading for 0.69 s, level 6 0.95 for 2.5 s
/// (`cargo bench --bench bench -- pack FILE`, 2026-12-04).
pub const LEVEL: u8 = 2;

/// First byte of a piece stored as deflated column streams (an invalid deflate block header).
pub const COLUMNS_MAGIC: u8 = 0xFE;
const COLUMNS_VERSION: u8 = 1;

/// The most a piece's column streams can take: the transform adds a byte a line and one a field
/// (a piece of line breaks only takes three times its length).
const MAX_PACKED: usize = 4 * PIECE_BYTES + 64;

/// One piece as stored: its column streams (cut at `delim`), deflated, behind the magic bytes.
pub fn pack(raw: &[u8], delim: u8) -> Vec<u8> {
    pack_at(raw, delim, LEVEL)
}

/// [`pack`] at another deflate level (the bench compares them).
pub fn pack_at(raw: &[u8], delim: u8, level: u8) -> Vec<u8> {
    let streams = super::columns::split(raw, delim);
    let deflated = compress_to_vec(&streams, level);
    let mut out = Vec::with_capacity(deflated.len() + 2);
    out.extend_from_slice(&[COLUMNS_MAGIC, COLUMNS_VERSION]);
    out.extend_from_slice(&deflated);
    out
}

/// A stored piece back to its raw bytes (either kind, see the module's notes), at most `limit`.
pub fn unpack(data: &[u8], limit: usize) -> Result<Vec<u8>, String> {
    match data {
        [COLUMNS_MAGIC, COLUMNS_VERSION, rest @ ..] => {
            let streams = decompress_to_vec_with_limit(rest, MAX_PACKED)
                .map_err(|e| format!("does not inflate: {e:?}"))?;
            super::columns::join(&streams, limit)
        }
        [COLUMNS_MAGIC, v, ..] => Err(format!("column streams of an unknown version {v}")),
        _ => decompress_to_vec_with_limit(data, limit).map_err(|e| format!("does not inflate: {e:?}")),
    }
}

/// Pieces waiting between the compressing thread and the writer.
const QUEUE: usize = 2;

/// Keep the file at `path` as the original of `upload_id`: its pieces are deflated on a blocking
/// thread and written in short transactions while the upload is still `importing`, so they vanish
/// with it if the import fails. It ends early, between two pieces, once `stop` is raised (the
/// import failed). Returns the bytes read and the bytes stored.
pub(super) async fn keep(
    pool: &SqlitePool,
    upload_id: i64,
    path: &Path,
    delim: u8,
    stop: &AtomicBool,
) -> Result<(u64, u64), ImportError> {
    let (tx, mut rx) = tokio::sync::mpsc::channel::<std::io::Result<(usize, Vec<u8>)>>(QUEUE);
    let path = path.to_path_buf();
    let reader = tokio::task::spawn_blocking(move || {
        let mut file = match std::fs::File::open(&path) {
            Ok(f) => f,
            Err(e) => {
                let _ = tx.blocking_send(Err(e));
                return;
            }
        };
        let mut buf = vec![0u8; PIECE_BYTES];
        loop {
            let n = match read_full(&mut file, &mut buf) {
                Ok(n) => n,
                Err(e) => {
                    let _ = tx.blocking_send(Err(e));
                    return;
                }
            };
            if n == 0 {
                return;
            }
            let packed = pack(&buf[..n], delim);
            // A closed queue: the import failed and stopped reading; nothing more to do.
            if tx.blocking_send(Ok((n, packed))).is_err() {
                return;
            }
        }
    });
    let (mut raw, mut stored, mut seq) = (0u64, 0u64, 0i64);
    while let Some(piece) = rx.recv().await {
        if stop.load(Ordering::Relaxed) {
            break;
        }
        let (n, packed) = piece.map_err(|e| {
            ImportError::Bad(crate::ingest::IngestError {
                message: format!("cannot read the uploaded file to keep it: {e}"),
                line: None,
                column: None,
                field: None,
            })
        })?;
        let mut tx = begin_write(pool).await?;
        sqlx::query("INSERT INTO upload_original (upload_id, seq, raw_bytes, data) VALUES (?, ?, ?, ?)")
            .bind(upload_id)
            .bind(seq)
            .bind(n as i64)
            .bind(&packed)
            .execute(&mut *tx)
            .await?;
        tx.commit().await?;
        seq += 1;
        raw += n as u64;
        stored += packed.len() as u64;
    }
    // A closed queue stops the reading thread at its next piece.
    drop(rx);
    reader.await.map_err(|e| super::bad(format!("the original could not be kept: {e}"), None))?;
    Ok((raw, stored))
}

/// Fill `buf` from `r` as far as the file goes; the bytes read (0 at the end).
fn read_full(r: &mut impl Read, buf: &mut [u8]) -> std::io::Result<usize> {
    let mut n = 0;
    while n < buf.len() {
        match r.read(&mut buf[n..]) {
            Ok(0) => break,
            Ok(k) => n += k,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => return Err(e),
        }
    }
    Ok(n)
}

/// Whether the upload's original is kept.
pub async fn is_kept(pool: &SqlitePool, upload_id: i64) -> Result<bool, StoreError> {
    Ok(sqlx::query_scalar::<_, i64>("SELECT EXISTS (SELECT 1 FROM upload_original WHERE upload_id = ?)")
        .bind(upload_id)
        .fetch_one(pool)
        .await?
        != 0)
}

/// The first `max` bytes of the upload's kept original (its first piece inflated), for the
/// sniffer; `None` when no original is kept.
pub async fn head(pool: &SqlitePool, upload_id: i64, max: usize) -> Result<Option<Vec<u8>>, StoreError> {
    let data: Option<Vec<u8>> =
        sqlx::query_scalar("SELECT data FROM upload_original WHERE upload_id = ? AND seq = 0")
            .bind(upload_id)
            .fetch_optional(pool)
            .await?;
    let Some(data) = data else { return Ok(None) };
    let piece = unpack(&data, PIECE_BYTES).map_err(|e| StoreError::Damaged {
        path: format!("upload {upload_id}'s original"),
        detail: format!("piece 0: {e}"),
    })?;
    Ok(Some(piece[..piece.len().min(max)].to_vec()))
}

/// A restored original: where it was written, its SHA-256 (hex) and its length.
pub struct Restored {
    pub path: PathBuf,
    pub sha256: String,
    pub bytes: u64,
}

/// Inflate the original of `upload_id` into a new file at `out`, one piece at a time; `None` when
/// the upload has no original kept (imported before originals were kept). A piece that does not
/// inflate to its recorded length is damage, reported as such.
pub async fn restore(pool: &SqlitePool, upload_id: i64, out: &Path) -> Result<Option<Restored>, StoreError> {
    let pieces: i64 = sqlx::query_scalar("SELECT count(*) FROM upload_original WHERE upload_id = ?")
        .bind(upload_id)
        .fetch_one(pool)
        .await?;
    if pieces == 0 {
        return Ok(None);
    }
    let damaged =
        |detail: String| StoreError::Damaged { path: format!("upload {upload_id}'s original"), detail };
    let mut file =
        std::fs::File::create(out).map_err(|e| damaged(format!("cannot write {}: {e}", out.display())))?;
    let mut hasher = Sha256::new();
    let mut bytes = 0u64;
    for seq in 0..pieces {
        let row = sqlx::query("SELECT raw_bytes, data FROM upload_original WHERE upload_id = ? AND seq = ?")
            .bind(upload_id)
            .bind(seq)
            .fetch_optional(pool)
            .await?
            .ok_or_else(|| damaged(format!("piece {seq} of {pieces} is missing")))?;
        let raw: i64 = row.get("raw_bytes");
        let data: Vec<u8> = row.get("data");
        let piece = tokio::task::spawn_blocking(move || unpack(&data, PIECE_BYTES))
            .await
            .map_err(|e| damaged(format!("piece {seq}: {e}")))?
            .map_err(|e| damaged(format!("piece {seq}: {e}")))?;
        if piece.len() as i64 != raw {
            return Err(damaged(format!("piece {seq} inflates to {} bytes, not {raw}", piece.len())));
        }
        hasher.update(&piece);
        file.write_all(&piece).map_err(|e| damaged(format!("cannot write {}: {e}", out.display())))?;
        bytes += piece.len() as u64;
    }
    file.flush().map_err(|e| damaged(format!("cannot write {}: {e}", out.display())))?;
    let sha256 = hasher.finalize().iter().map(|b| format!("{b:02x}")).collect();
    Ok(Some(Restored { path: out.to_path_buf(), sha256, bytes }))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Pieces kept before the column streams (plain deflate of the raw bytes) still read back, and
    /// no deflate stream miniz writes starts with the magic byte (its block type would be 3, which
    /// RFC 1951 section 3.2.3 reserves).
    #[test]
    fn both_kinds_of_piece_read_back() {
        let mut text = b"Time;P bar;Q m3/min\r\n".to_vec();
        for i in 0..3000u32 {
            let row = format!(
                "2026-01-05 {:02}:{:02}:{:02};7,{};{},{}\r\n",
                i / 3600,
                i / 60 % 60,
                i % 60,
                i % 7,
                20 + i % 13,
                i % 10
            );
            text.extend_from_slice(row.as_bytes());
        }
        for level in 0..=10 {
            let plain = compress_to_vec(&text, level);
            assert_ne!(plain[0] & 0b110, 0b110, "level {level} starts a reserved block type");
            assert_eq!(unpack(&plain, text.len()).unwrap(), text);
        }
        let packed = pack(&text, b';');
        assert_eq!(packed[0], COLUMNS_MAGIC);
        assert_eq!(unpack(&packed, text.len()).unwrap(), text);
        assert!(packed.len() < compress_to_vec(&text, LEVEL).len());
        assert!(unpack(&packed, text.len() - 1).is_err(), "longer than recorded");
        assert!(unpack(&[COLUMNS_MAGIC, 9, 1, 2], 100).is_err(), "unknown version");
        // The column streams' largest growth, a whole piece of line breaks (three bytes a line),
        // and of empty fields still inflate within the limit and come back.
        for worst in [vec![b'\n'; PIECE_BYTES], b",\n".repeat(PIECE_BYTES / 2)] {
            assert_eq!(unpack(&pack(&worst, b','), PIECE_BYTES).unwrap(), worst);
        }
    }

    /// Pieces round-trip: a file of two and a half pieces comes back byte for byte, and its SHA-256
    /// is the one `sha2` gives for the bytes themselves.
    #[tokio::test]
    async fn an_original_comes_back_byte_for_byte() {
        let dir = std::env::temp_dir().join(format!("airledger-original-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let db = dir.join("o.sqlite");
        let (pool, _lock) = crate::store::open(&db).await.unwrap();
        sqlx::query("INSERT INTO audit (name, created_at) VALUES ('a', '2026-01-01T00:00:00Z')")
            .execute(&pool)
            .await
            .unwrap();
        sqlx::query(
            "INSERT INTO upload (id, audit_id, filename, sha256, bytes, state, mapping, created_at) \
             VALUES (7, 1, 'f.csv', 'x', 0, 'importing', '{}', '2026-01-01T00:00:00Z')",
        )
        .execute(&pool)
        .await
        .unwrap();
        let mut text = String::new();
        let mut i = 0u64;
        while text.len() < PIECE_BYTES * 5 / 2 {
            text.push_str(&format!(
                "2026-01-05T00:{:02}:{:02}Z,{}.{},7.{}\n",
                i / 60 % 60,
                i % 60,
                40 + i % 17,
                i % 10,
                i % 7
            ));
            i += 1;
        }
        let src = dir.join("in.csv");
        std::fs::write(&src, &text).unwrap();
        let (raw, stored) = keep(&pool, 7, &src, b',', &AtomicBool::new(false)).await.unwrap();
        assert_eq!(raw, text.len() as u64);
        assert!(stored < raw / 3, "{stored} bytes stored for {raw}");
        assert!(is_kept(&pool, 7).await.unwrap());
        let out = dir.join("out.csv");
        let r = restore(&pool, 7, &out).await.unwrap().expect("kept");
        assert_eq!(std::fs::read(&out).unwrap(), text.as_bytes());
        let want: String = Sha256::digest(text.as_bytes()).iter().map(|b| format!("{b:02x}")).collect();
        assert_eq!((r.sha256, r.bytes), (want, text.len() as u64));
        assert!(restore(&pool, 8, &out).await.unwrap().is_none(), "no original for another upload");
        assert_eq!(head(&pool, 7, 100).await.unwrap().unwrap(), text.as_bytes()[..100]);
        pool.close().await;
        let _ = std::fs::remove_dir_all(&dir);
    }
}
