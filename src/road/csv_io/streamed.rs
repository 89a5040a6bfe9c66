//! The plain reader ([`super::read_plain`]) on a file read in blocks into
//! one reused buffer per thread, instead of the whole file into memory
//! first. A fresh allocation the size of the file costs a page fault per
//! 4 KiB page, which on a virtual machine can cost more than copying the
//! bytes (measured: 5–9 ms to read a 11.7 MB profile whole against 1.3 ms
//! block by block, 2-CPU AMD EPYC virtual machine), and it all happens
//! before parsing can start. The rows, checks and numbers are those of the
//! plain reader; anything it would not take gives `None`, and the caller
//! reads the file whole as before.

use std::io;

use super::{
    PARALLEL_PARSE_BYTES, PlainColumns, PlainRows, plain_header, plain_rows, row_estimate,
};
use crate::road::Profile;

/// Bytes read at a time. A line longer than this gives `None`.
pub(super) const BLOCK_BYTES: usize = 256 * 1024;

/// Reading at an offset without moving a shared cursor, so the two halves
/// of a file can be read from one handle on two threads.
pub(super) trait ReadAt: Sync {
    /// Reads up to `buf.len()` bytes at `offset`; 0 at the end.
    fn read_at(&self, buf: &mut [u8], offset: u64) -> io::Result<usize>;
}

impl ReadAt for [u8] {
    fn read_at(&self, buf: &mut [u8], offset: u64) -> io::Result<usize> {
        let start = usize::try_from(offset)
            .unwrap_or(usize::MAX)
            .min(self.len());
        let n = buf.len().min(self.len() - start);
        buf[..n].copy_from_slice(&self[start..start + n]);
        Ok(n)
    }
}

#[cfg(unix)]
impl ReadAt for std::fs::File {
    fn read_at(&self, buf: &mut [u8], offset: u64) -> io::Result<usize> {
        std::os::unix::fs::FileExt::read_at(self, buf, offset)
    }
}

#[cfg(windows)]
impl ReadAt for std::fs::File {
    fn read_at(&self, buf: &mut [u8], offset: u64) -> io::Result<usize> {
        std::os::windows::fs::FileExt::seek_read(self, buf, offset)
    }
}

/// Fills `buf` from `offset`; `None` on an error or a file that ended
/// early (it changed while read: the caller's whole read reports it).
fn fill_at<R: ReadAt + ?Sized>(src: &R, buf: &mut [u8], mut offset: u64) -> Option<()> {
    let mut done = 0;
    while done < buf.len() {
        match src.read_at(&mut buf[done..], offset) {
            Ok(0) => return None,
            Ok(n) => {
                done += n;
                offset += n as u64;
            }
            Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
            Err(_) => return None,
        }
    }
    Some(())
}

/// The plain reader's profile of the `len` bytes of `src`, read
/// `block` bytes at a time; `None` for anything the plain reader would
/// not take, and for files with a `\r` or a `"` anywhere (read whole,
/// they still take the plain reader where they can).
pub(super) fn read_plain_streamed<R: ReadAt + ?Sized>(
    src: &R,
    len: u64,
    block: usize,
) -> Option<Profile> {
    let mut head = vec![0; block.min(usize::try_from(len).ok()?)];
    fill_at(src, &mut head, 0)?;
    let header_end = memchr::memchr(b'\n', &head)?;
    let header = &head[..header_end];
    if memchr::memchr2(b'"', b'\r', header).is_some() {
        return None;
    }
    let columns = plain_header(header, false)?;
    let start = header_end as u64 + 1;
    // One line end at the very end of the file closes the last row.
    let mut last = [0u8];
    fill_at(src, &mut last, len - 1)?;
    let end = if last[0] == b'\n' && len > start {
        len - 1
    } else {
        len
    };
    let Some(split) = split_point(src, start, end)? else {
        return rows_of(src, start, end, block, columns, end - start)?.into_profile();
    };
    // Two halves, one per core, joined in order: the first is given room
    // for all the rows, so the second's are appended without moving them.
    let second = std::thread::scope(|scope| {
        let second = scope.spawn(|| rows_of(src, split + 1, end, block, columns, end - split));
        let first = rows_of(src, start, split, block, columns, end - start);
        first.zip(second.join().ok().flatten())
    });
    let (mut rows, second) = second?;
    rows.append(second)?;
    rows.into_profile()
}

/// Where a body of at least [`PARALLEL_PARSE_BYTES`] is cut in two: the
/// first line end from its middle on. `Some(None)` for a body read on one
/// thread; `None` on a read error.
fn split_point<R: ReadAt + ?Sized>(src: &R, start: u64, end: u64) -> Option<Option<u64>> {
    if end - start < PARALLEL_PARSE_BYTES as u64 {
        return Some(None);
    }
    let middle = start + (end - start) / 2;
    let mut window = vec![0; (64 * 1024).min(usize::try_from(end - middle).ok()?)];
    fill_at(src, &mut window, middle)?;
    Some(memchr::memchr(b'\n', &window).map(|i| middle + i as u64))
}

/// The rows of bytes `start..end` of `src` (whole lines, the last without
/// its line end), read `block` bytes at a time into one buffer; room is
/// made for the rows of `room_bytes` of body.
fn rows_of<R: ReadAt + ?Sized>(
    src: &R,
    start: u64,
    end: u64,
    block: usize,
    columns: PlainColumns,
    room_bytes: u64,
) -> Option<PlainRows> {
    let mut rows = PlainRows::with_capacity(row_estimate(usize::try_from(room_bytes).ok()?));
    let mut buf = vec![0; block];
    // Bytes at the front of `buf`: the start of a line cut by the last read.
    let mut carry = 0;
    let mut at = start;
    loop {
        let want = usize::try_from(end - at).ok()?.min(block - carry);
        fill_at(src, &mut buf[carry..carry + want], at)?;
        at += want as u64;
        let filled = carry + want;
        if memchr::memchr2(b'"', b'\r', &buf[carry..filled]).is_some() {
            return None;
        }
        if at == end {
            plain_rows(&buf[..filled], columns, false, &mut rows)?;
            return Some(rows);
        }
        // No line end in a full buffer: a line longer than a block.
        let cut = memchr::memrchr(b'\n', &buf[..filled])?;
        plain_rows(&buf[..cut], columns, false, &mut rows)?;
        buf.copy_within(cut + 1..filled, 0);
        carry = filled - cut - 1;
    }
}
