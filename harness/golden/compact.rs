//! The compact golden format (extension `.golden`): the identity of a CSV
//! golden in a short text header, the output columns bit-exact and
//! compressed in independent blocks, the input columns not stored but
//! checked by a hash of their bits per block.
//!
//! ```text
//! # shadegate compact golden, format 1
//! # check: brdf_full
//! # shader: shaders/brackenfold/materials.wgsl
//! # function: brdf
//! # shader-hash: 5f0c2d0e9a1b7c33
//! # sweep: v = ...; l = ...
//! # points: 1048576
//! # columns: v.x:f32,v.y:f32,...,result.x:f32,result.y:f32,result.z:f32
//! # block: 4096
//! # blocks: 256
//! # data
//! <index: per block, little-endian: compressed length u32, input hash u64, output hash u64>
//! <the blocks, one after the other, in point order>
//! ```
//!
//! Lines 1 to 7 are the CSV header's lines; line 8 lists the same columns as
//! the CSV's column line (inputs, then outputs from the first `result`
//! column). Every block holds `block` points (the last one the rest). A
//! block is its output columns in the column encoding of
//! [`crate::values`] (one `u32` bit pattern per point, NaN payloads and
//! `-0` kept), each column XORed with its previous value in the block (the
//! first with 0) and split into four byte planes (all low bytes, then the
//! next, ...), the columns one after the other, compressed with zlib
//! (RFC 1950, which carries an Adler-32 of the block). Block `k` starts at
//! the end of the index plus the lengths of blocks `0..k`, so any point range
//! is read by decoding only the blocks it touches.
//!
//! The two hashes are [`hash_columns`] of a block's input and output
//! columns. Each step of that hash is a bijection of its state for a fixed
//! word and of the word for a fixed state, so any single changed value in a
//! block changes its hash.
//!
//! Every problem is a located error naming the file and the header line or
//! the block; nothing is allocated by a claimed size before the file's own
//! length justifies it.

use std::io::{Read as _, Seek as _, SeekFrom};
use std::ops::Range;
use std::path::{Path, PathBuf};

use rayon::prelude::*;

use super::{Golden, Header};
use crate::diagnostic::Diagnostic;
use crate::limits::{Limit, Limits};
use crate::values::ScalarKind;

/// The first line of a compact golden.
pub const MAGIC: &str = "# shadegate compact golden, format 1";

/// The file name extension of a compact golden (the format a check's
/// `golden` path chooses).
pub const EXTENSION: &str = "golden";

/// Points per block that `record` writes.
pub const BLOCK_POINTS: usize = 4096;

/// The largest block a reader accepts: a block is decoded whole, so its
/// size bounds the memory one read of a few points takes.
pub const MAX_BLOCK_POINTS: usize = 1 << 20;

/// Bytes of one index entry.
const ENTRY: usize = 20;

/// Header line numbers (1-based), for located errors.
const LINE_POINTS: u32 = 7;
const LINE_COLUMNS: u32 = 8;
const LINE_BLOCK: u32 = 9;
const LINE_BLOCKS: u32 = 10;
const LINE_DATA: u32 = 11;

/// A 64-bit hash of columns of bit patterns (see the module doc).
pub fn hash_columns(cols: &[&[u32]]) -> u64 {
    const K: u64 = 0x517c_c1b7_2722_0a95;
    let step = |h: u64, w: u64| (h.rotate_left(5) ^ w).wrapping_mul(K);
    let n = cols.first().map_or(0, |c| c.len());
    let mut h = step(0x243f_6a88_85a3_08d3, n as u64);
    for (i, c) in cols.iter().enumerate() {
        h = step(h, (1 << 32) | i as u64);
        for &w in *c {
            h = step(h, u64::from(w));
        }
    }
    // SplitMix64's finaliser: every input bit reaches every output bit.
    h ^= h >> 30;
    h = h.wrapping_mul(0xbf58_476d_1ce4_e5b9);
    h ^= h >> 27;
    h = h.wrapping_mul(0x94d0_49bb_1331_11eb);
    h ^ (h >> 31)
}

/// XOR with the previous value, then byte planes (see the module doc).
fn shuffle(cols: &[&[u32]]) -> Vec<u8> {
    let n = cols.first().map_or(0, |c| c.len());
    let mut out = vec![0u8; n * 4 * cols.len()];
    for (c, col) in cols.iter().enumerate() {
        let base = c * 4 * n;
        let mut prev = 0u32;
        for (i, &v) in col.iter().enumerate() {
            let x = v ^ prev;
            prev = v;
            for b in 0..4 {
                out[base + b * n + i] = (x >> (8 * b)) as u8;
            }
        }
    }
    out
}

/// The inverse of [`shuffle`] for `ncols` columns of `n` points.
fn unshuffle(bytes: &[u8], n: usize, ncols: usize) -> Vec<Vec<u32>> {
    (0..ncols)
        .map(|c| {
            let base = c * 4 * n;
            let mut prev = 0u32;
            (0..n)
                .map(|i| {
                    let mut x = 0u32;
                    for b in 0..4 {
                        x |= u32::from(bytes[base + b * n + i]) << (8 * b);
                    }
                    prev ^= x;
                    prev
                })
                .collect()
        })
        .collect()
}

fn compress(bytes: &[u8]) -> Vec<u8> {
    use flate2::write::ZlibEncoder;
    use std::io::Write as _;
    let mut e = ZlibEncoder::new(Vec::new(), flate2::Compression::best());
    // Writing into a Vec cannot fail.
    e.write_all(bytes).expect("compress into memory");
    e.finish().expect("compress into memory")
}

/// The bytes of a compact golden of `g` with blocks of `block` points.
pub fn render(g: &Golden, block: usize) -> Vec<u8> {
    let block = block.clamp(1, MAX_BLOCK_POINTS);
    let n = g.header.points;
    let nblocks = n.div_ceil(block);
    let encoded: Vec<(Vec<u8>, u64, u64)> = (0..nblocks)
        .into_par_iter()
        .map(|k| {
            let r = k * block..((k + 1) * block).min(n);
            let ins: Vec<&[u32]> = g.input_columns.iter().map(|c| &c[r.clone()]).collect();
            let outs: Vec<&[u32]> = g.output_columns.iter().map(|c| &c[r.clone()]).collect();
            (
                compress(&shuffle(&outs)),
                hash_columns(&ins),
                hash_columns(&outs),
            )
        })
        .collect();
    let mut out = header_text(g, block, nblocks).into_bytes();
    for (bytes, hin, hout) in &encoded {
        out.extend_from_slice(&(bytes.len() as u32).to_le_bytes());
        out.extend_from_slice(&hin.to_le_bytes());
        out.extend_from_slice(&hout.to_le_bytes());
    }
    for (bytes, _, _) in &encoded {
        out.extend_from_slice(bytes);
    }
    out
}

fn columns_line(inputs: &[(String, ScalarKind)], outputs: &[(String, ScalarKind)]) -> String {
    inputs
        .iter()
        .chain(outputs)
        .map(|(n, k)| format!("{n}:{}", k.wgsl()))
        .collect::<Vec<_>>()
        .join(",")
}

fn header_text(g: &Golden, block: usize, nblocks: usize) -> String {
    format!(
        "{MAGIC}\n{}# columns: {}\n# block: {block}\n# blocks: {nblocks}\n# data\n",
        g.header.lines(),
        columns_line(&g.inputs, &g.outputs)
    )
}

/// Where a compact golden's bytes come from.
#[derive(Debug)]
enum Source {
    File(PathBuf),
    Memory(Vec<u8>),
}

/// One block's place in the file and its hashes.
#[derive(Clone, Copy, Debug)]
struct Entry {
    offset: u64,
    len: u32,
    inputs: u64,
    outputs: u64,
}

/// An opened compact golden: its header and index, the blocks read on
/// demand.
#[derive(Debug)]
pub struct Blocks {
    path: PathBuf,
    /// The header's text, for located errors.
    header_text: String,
    check: String,
    block: usize,
    points: usize,
    outputs: usize,
    index: Vec<Entry>,
    source: Source,
}

/// What [`open`] and [`parse`] give: the identity and the blocks.
pub(super) type Opened = (
    Header,
    Vec<(String, ScalarKind)>,
    Vec<(String, ScalarKind)>,
    Blocks,
);

/// Open the compact golden at `path`: reads the header and the index only.
/// A file over the `golden_bytes` limit is refused before it is read.
pub(super) fn open(path: &Path, limits: &Limits) -> Result<Opened, Diagnostic> {
    let cannot = |e: std::io::Error| {
        Diagnostic::without_position(
            path,
            format!("cannot read golden dataset: {e} (record it with `shadegate record`)"),
        )
    };
    let mut f = std::fs::File::open(path).map_err(cannot)?;
    let size = f.metadata().map_err(cannot)?.len();
    if size > limits.golden_bytes {
        let l = Limit::GoldenBytes;
        return Err(Diagnostic::at_location(
            path,
            MAGIC,
            1,
            1,
            1,
            format!(
                "the golden dataset is {size} bytes, larger than the `{l}` limit of {} bytes; {}",
                limits.golden_bytes,
                l.how_to_raise()
            ),
        ));
    }
    // The header is text up to `# data`; read it a piece at a time.
    let mut head = Vec::new();
    let mut buf = [0u8; 8192];
    let end = loop {
        let got = f.read(&mut buf).map_err(cannot)?;
        if got == 0 {
            break head.len();
        }
        // Search only what is new (and the few bytes before it).
        let from = head.len().saturating_sub(7);
        head.extend_from_slice(&buf[..got]);
        if let Some(p) = find_data_line(&head[from..]) {
            break from + p;
        }
    };
    head.truncate(end);
    parse_header(path, &head, size, limits, |index_len| {
        let mut index = vec![0u8; index_len];
        f.seek(SeekFrom::Start(end as u64)).map_err(cannot)?;
        f.read_exact(&mut index).map_err(cannot)?;
        Ok(index)
    })
    .map(|(h, i, o, mut b)| {
        b.source = Source::File(path.to_path_buf());
        (h, i, o, b)
    })
}

/// Parse a compact golden held in memory (the fuzz target's entry).
pub(super) fn parse(path: &Path, bytes: Vec<u8>, limits: &Limits) -> Result<Opened, Diagnostic> {
    let end = find_data_line(&bytes).unwrap_or(bytes.len());
    let size = bytes.len() as u64;
    let (h, i, o, mut b) = parse_header(path, &bytes[..end], size, limits, |index_len| {
        Ok(bytes[end..end + index_len].to_vec())
    })?;
    b.source = Source::Memory(bytes);
    Ok((h, i, o, b))
}

/// The byte just past the `# data` line, if the header has one.
fn find_data_line(bytes: &[u8]) -> Option<usize> {
    const DATA: &[u8] = b"\n# data\n";
    bytes
        .windows(DATA.len())
        .position(|w| w == DATA)
        .map(|p| p + DATA.len())
}

fn parse_header(
    path: &Path,
    head: &[u8],
    size: u64,
    limits: &Limits,
    read_index: impl FnOnce(usize) -> Result<Vec<u8>, Diagnostic>,
) -> Result<Opened, Diagnostic> {
    let text = String::from_utf8_lossy(head).into_owned();
    let err = |line: u32, msg: String| Diagnostic::at_location(path, &text, line, 1, 1, msg);
    let lines: Vec<&str> = text.lines().collect();
    if lines.first() != Some(&MAGIC) {
        return Err(err(
            1,
            format!("not a compact golden (expected the first line `{MAGIC}`)"),
        ));
    }
    let keys: Vec<&str> = super::IDENTITY_KEYS
        .iter()
        .chain(&["columns", "block", "blocks"])
        .copied()
        .collect();
    let fields = super::header_fields(&lines, &keys).map_err(|(line, m)| err(line as u32, m))?;
    if lines.get(LINE_DATA as usize - 1) != Some(&"# data") || lines.len() != LINE_DATA as usize {
        return Err(err(
            LINE_DATA.min(lines.len() as u32 + 1),
            "truncated header: expected the line `# data` after `# blocks:`".into(),
        ));
    }
    let number = |line: u32, v: &str, what: &str| -> Result<u64, Diagnostic> {
        v.parse::<u64>()
            .map_err(|_| err(line, format!("`{v}` is not {what}")))
    };
    let points = number(LINE_POINTS, &fields[5], "a point count")?;
    if points > limits.points_per_check {
        let l = Limit::PointsPerCheck;
        return Err(err(
            LINE_POINTS,
            format!(
                "the header claims {points} points, more than the `{l}` limit of {}; {}",
                limits.points_per_check,
                l.how_to_raise()
            ),
        ));
    }
    let points = points as usize;
    let mut cols = Vec::new();
    for c in fields[6].split(',') {
        let (name, kind) = c.rsplit_once(':').ok_or_else(|| {
            err(
                LINE_COLUMNS,
                format!("column `{c}` lacks its type (`name:f32`)"),
            )
        })?;
        let kind = ScalarKind::parse(kind)
            .ok_or_else(|| err(LINE_COLUMNS, format!("column `{c}`: unknown type `{kind}`")))?;
        cols.push((name.to_string(), kind));
    }
    let split = cols
        .iter()
        .position(|(n, _)| n == "result" || n.starts_with("result.") || n.starts_with("result["))
        .ok_or_else(|| err(LINE_COLUMNS, "no `result` column".into()))?;
    let outputs = cols.split_off(split);
    let block = number(LINE_BLOCK, &fields[7], "a block size")?;
    if block == 0 || block > MAX_BLOCK_POINTS as u64 {
        return Err(err(
            LINE_BLOCK,
            format!("a block of {block} points is outside 1..={MAX_BLOCK_POINTS}"),
        ));
    }
    let block = block as usize;
    let nblocks = number(LINE_BLOCKS, &fields[8], "a block count")?;
    if nblocks != points.div_ceil(block) as u64 {
        return Err(err(
            LINE_BLOCKS,
            format!(
                "{nblocks} blocks cannot hold {points} points in blocks of {block} (expected {})",
                points.div_ceil(block)
            ),
        ));
    }
    let nblocks = nblocks as usize;
    // The index must fit in the file before it is read.
    let data_at = head.len() as u64;
    let index_len = nblocks as u64 * ENTRY as u64;
    if data_at + index_len > size {
        return Err(err(
            LINE_BLOCKS,
            format!(
                "truncated: the index of {nblocks} blocks needs {index_len} bytes after the header but the file has {}",
                size - data_at
            ),
        ));
    }
    let raw = read_index(index_len as usize)?;
    let mut index = Vec::with_capacity(nblocks);
    let mut offset = data_at + index_len;
    for e in raw.chunks_exact(ENTRY) {
        let len = u32::from_le_bytes(e[0..4].try_into().expect("4 bytes"));
        let entry = Entry {
            offset,
            len,
            inputs: u64::from_le_bytes(e[4..12].try_into().expect("8 bytes")),
            outputs: u64::from_le_bytes(e[12..20].try_into().expect("8 bytes")),
        };
        offset += u64::from(len);
        index.push(entry);
    }
    if offset != size {
        let what = if offset > size {
            "truncated"
        } else {
            "trailing bytes"
        };
        return Err(err(
            LINE_BLOCKS,
            format!("{what}: the index's {nblocks} blocks end at byte {offset} but the file has {size} bytes"),
        ));
    }
    let header = Header::from_fields(&fields, points);
    let nout = outputs.len();
    Ok((
        header,
        cols,
        outputs,
        Blocks {
            path: path.to_path_buf(),
            check: fields[0].clone(),
            header_text: text.clone(),
            block,
            points,
            outputs: nout,
            index,
            source: Source::Memory(Vec::new()),
        },
    ))
}

impl Blocks {
    /// Points per block.
    pub fn block(&self) -> usize {
        self.block
    }

    fn points_of(&self, k: usize) -> Range<usize> {
        k * self.block..((k + 1) * self.block).min(self.points)
    }

    /// An error about block `k`, at the header's `# blocks:` line.
    fn block_err(&self, k: usize, msg: impl std::fmt::Display) -> Diagnostic {
        let r = self.points_of(k);
        let e = self.index[k];
        Diagnostic::at_location(
            &self.path,
            &self.header_text,
            LINE_BLOCKS,
            1,
            1,
            format!(
                "block {k} of {} (points {}..{}, bytes {}..{}): {msg}; re-record with `shadegate record {}`",
                self.index.len(),
                r.start,
                r.end,
                e.offset,
                e.offset + u64::from(e.len),
                self.check
            ),
        )
    }

    fn range_err(&self, range: &Range<usize>) -> Diagnostic {
        Diagnostic::at_location(
            &self.path,
            &self.header_text,
            LINE_POINTS,
            1,
            1,
            format!(
                "points {}..{} asked for, but the golden holds {} points",
                range.start, range.end, self.points
            ),
        )
    }

    /// The compressed bytes of block `k`.
    fn fetch(&self, k: usize) -> Result<Vec<u8>, Diagnostic> {
        let e = self.index[k];
        match &self.source {
            Source::Memory(b) => {
                Ok(b[e.offset as usize..(e.offset + u64::from(e.len)) as usize].to_vec())
            }
            Source::File(p) => {
                let read = || -> std::io::Result<Vec<u8>> {
                    let mut f = std::fs::File::open(p)?;
                    f.seek(SeekFrom::Start(e.offset))?;
                    let mut b = Vec::new();
                    f.take(u64::from(e.len)).read_to_end(&mut b)?;
                    Ok(b)
                };
                let b = read().map_err(|io| self.block_err(k, format!("cannot read: {io}")))?;
                if b.len() != e.len as usize {
                    return Err(
                        self.block_err(k, "truncated (the file changed since it was opened?)")
                    );
                }
                Ok(b)
            }
        }
    }

    /// Decode block `k`: its output columns, checked against their hash.
    fn decode(&self, k: usize) -> Result<Vec<Vec<u32>>, Diagnostic> {
        let n = self.points_of(k).len();
        let want = n * 4 * self.outputs;
        let bytes = self.fetch(k)?;
        // Grown by what the stream really holds, never reserved by the
        // claim (a short stream of a corrupt file stays short).
        let mut out = Vec::new();
        flate2::read::ZlibDecoder::new(&bytes[..])
            .take(want as u64 + 1)
            .read_to_end(&mut out)
            .map_err(|e| self.block_err(k, format!("corrupt: {e}")))?;
        if out.len() != want {
            return Err(self.block_err(
                k,
                format!("corrupt: it decodes to {} bytes, not {want}", out.len()),
            ));
        }
        let cols = unshuffle(&out, n, self.outputs);
        let refs: Vec<&[u32]> = cols.iter().map(Vec::as_slice).collect();
        if hash_columns(&refs) != self.index[k].outputs {
            return Err(self.block_err(k, "corrupt: its values do not match their hash"));
        }
        Ok(cols)
    }

    /// The output columns of the points in `range`, decoding only the
    /// blocks that hold them.
    pub fn read_outputs(&self, range: Range<usize>) -> Result<Vec<Vec<u32>>, Diagnostic> {
        if range.start > range.end || range.end > self.points {
            return Err(self.range_err(&range));
        }
        // Reserved block by block as blocks decode, not by the range asked for.
        let mut cols: Vec<Vec<u32>> = vec![Vec::new(); self.outputs];
        if range.is_empty() {
            return Ok(cols);
        }
        for k in range.start / self.block..range.end.div_ceil(self.block) {
            let r = self.points_of(k);
            let from = range.start.max(r.start) - r.start;
            let to = range.end.min(r.end) - r.start;
            for (c, col) in self.decode(k)?.into_iter().enumerate() {
                cols[c].extend_from_slice(&col[from..to]);
            }
        }
        Ok(cols)
    }

    /// Check the input columns of points `range` (`input_columns[c][i]` is
    /// point `range.start + i`) against the hash of every block that lies
    /// wholly inside `range`. Returns the number of points in blocks the
    /// range only partly covers, which a hash cannot check.
    pub fn check_inputs(
        &self,
        range: Range<usize>,
        input_columns: &[Vec<u32>],
    ) -> Result<usize, Diagnostic> {
        if range.start > range.end || range.end > self.points {
            return Err(self.range_err(&range));
        }
        if input_columns.iter().any(|c| c.len() != range.len()) {
            return Err(self.range_err(&range));
        }
        let mut unchecked = 0;
        for k in range.start / self.block..range.end.div_ceil(self.block) {
            let r = self.points_of(k);
            if r.start < range.start || r.end > range.end {
                unchecked += range.end.min(r.end) - range.start.max(r.start);
                continue;
            }
            let local = r.start - range.start..r.end - range.start;
            let cols: Vec<&[u32]> = input_columns.iter().map(|c| &c[local.clone()]).collect();
            if hash_columns(&cols) != self.index[k].inputs {
                return Err(self.block_err(
                    k,
                    "the golden's inputs differ from the check's (the sweep or the argument expressions changed?)",
                ));
            }
        }
        Ok(unchecked)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shuffle_inverts() {
        let a = [0u32, 1, 0x7fc0_0001, 0x8000_0000, u32::MAX, 17];
        let b = [5u32, 5, 5, 0x3c00, 0, 1];
        let bytes = shuffle(&[&a, &b]);
        assert_eq!(unshuffle(&bytes, 6, 2), vec![a.to_vec(), b.to_vec()]);
    }

    #[test]
    fn one_changed_word_changes_the_hash() {
        let a: Vec<u32> = (0..300).collect();
        let h = hash_columns(&[&a]);
        for i in 0..a.len() {
            for bit in [0, 7, 31] {
                let mut b = a.clone();
                b[i] ^= 1 << bit;
                assert_ne!(hash_columns(&[&b]), h, "point {i} bit {bit}");
            }
        }
        // Columns are not interchangeable.
        let z = vec![0u32; 300];
        assert_ne!(hash_columns(&[&a, &z]), hash_columns(&[&z, &a]));
    }
}
