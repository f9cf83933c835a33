//! 1-bit baseline TIFF, written row by row so that a film never has to exist whole in memory.
//!
//! TIFF 6.0 (Adobe, 1992) references: §2 header and IFD (little-endian "II", 42, entries sorted
//! by tag, values of more than 4 bytes stored elsewhere at word boundaries), §3 bilevel images
//! (the required fields), §8 baseline field reference, §9 PackBits.
//!
//! # What the pixels mean
//! `PhotometricInterpretation = 0` (WhiteIsZero): a set bit is **black**, i.e. opaque on the
//! film. That is exactly how `raster::Bitmap` stores a film (bit 1 = black), so rows are
//! written without inversion; it is also the "normal" interpretation of bilevel images in
//! TIFF 6.0 §10.
//!
//! # Layout
//! Header (8 bytes) → strips as they are produced → the out-of-line values (strip offsets and
//! byte counts, resolutions, software name) → the one IFD; the header's IFD offset is patched
//! at the end (hence `Seek`). Memory: one strip of encoded bytes plus 8 bytes per strip for
//! the offset tables.
//!
//! Offsets are 32-bit (baseline TIFF): a file beyond 4 GiB is refused with an error; PackBits
//! keeps even a 25,400 dpi A4 film far below that unless it is mostly fine detail.

use std::io::{self, Seek, SeekFrom, Write};

/// How strips are compressed.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum TiffCompression {
    /// Compression = 1: rows as packed bytes.
    None,
    /// Compression = 32773 (TIFF 6.0 §9): byte-wise run lengths, each row packed separately.
    #[default]
    #[serde(rename = "packbits")]
    PackBits,
}

impl TiffCompression {
    /// The Compression field's value (TIFF 6.0 §8).
    pub fn code(self) -> u16 {
        match self {
            TiffCompression::None => 1,
            TiffCompression::PackBits => 32773,
        }
    }
}

/// What to write.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TiffSpec {
    pub width: u32,
    pub height: u32,
    pub dpi_x: f64,
    pub dpi_y: f64,
    pub compression: TiffCompression,
}

// Field types (TIFF 6.0 §2).
const SHORT: u16 = 3;
const LONG: u16 = 4;
const RATIONAL: u16 = 5;
const ASCII: u16 = 2;

/// Rows per strip: about 64 KiB of unpacked pixels (TIFF 6.0 §3 suggests strips of about
/// 8 KiB for old readers; today's readers do well with larger ones, and fewer strips keep the
/// offset tables small at 25,400 dpi).
pub fn rows_per_strip(width: u32) -> u32 {
    let row_bytes = (width as usize).div_ceil(8).max(1);
    (65_536 / row_bytes).clamp(1, u32::MAX as usize) as u32
}

/// A resolution as a TIFF RATIONAL: exact for whole numbers, otherwise to 1/10,000 dpi.
pub fn rational(dpi: f64) -> (u32, u32) {
    if dpi.fract() == 0.0 && dpi > 0.0 && dpi < u32::MAX as f64 {
        return (dpi as u32, 1);
    }
    let den = 10_000u64;
    let num = (dpi * den as f64).round().clamp(1.0, u32::MAX as f64) as u64;
    let g = gcd(num, den);
    ((num / g) as u32, (den / g) as u32)
}

fn gcd(a: u64, b: u64) -> u64 {
    if b == 0 {
        a.max(1)
    } else {
        gcd(b, a % b)
    }
}

/// PackBits one row (TIFF 6.0 §9): runs of 2 or more equal bytes become replicate runs
/// (`1 − n`, byte), everything else literal runs (`n − 1`, bytes), at most 128 bytes each.
pub fn packbits_row(src: &[u8], out: &mut Vec<u8>) {
    let n = src.len();
    let mut i = 0;
    let mut literal_start = 0;
    let flush_literal = |out: &mut Vec<u8>, from: usize, to: usize| {
        let mut k = from;
        while k < to {
            let len = (to - k).min(128);
            out.push((len - 1) as u8);
            out.extend_from_slice(&src[k..k + len]);
            k += len;
        }
    };
    while i < n {
        let b = src[i];
        let mut run = 1;
        while i + run < n && run < 128 && src[i + run] == b {
            run += 1;
        }
        if run >= 2 {
            flush_literal(out, literal_start, i);
            out.push((257 - run) as u8);
            out.push(b);
            i += run;
            literal_start = i;
        } else {
            i += 1;
        }
    }
    flush_literal(out, literal_start, n);
}

/// Streams a 1-bit TIFF: create, feed every row top to bottom, finish.
pub struct TiffWriter<W: Write + Seek> {
    out: W,
    spec: TiffSpec,
    rows_per_strip: u32,
    row_bytes: usize,
    /// Encoded bytes of the strip being filled.
    strip: Vec<u8>,
    rows_in_strip: u32,
    rows_done: u32,
    offsets: Vec<u32>,
    counts: Vec<u32>,
    /// Bytes written so far (= the next strip's offset).
    pos: u64,
}

fn too_big() -> io::Error {
    io::Error::other(
        "the TIFF would be larger than 4 GiB, the limit of baseline TIFF; use a lower resolution or PackBits compression",
    )
}

impl<W: Write + Seek> TiffWriter<W> {
    /// Writes the header. `out` must be positioned at its start.
    pub fn new(mut out: W, spec: TiffSpec) -> io::Result<TiffWriter<W>> {
        if spec.width == 0 || spec.height == 0 {
            return Err(io::Error::new(
                io::ErrorKind::InvalidInput,
                "a TIFF image needs at least one pixel each way",
            ));
        }
        // "II", 42, IFD offset (patched in `finish`).
        out.write_all(&[b'I', b'I', 42, 0, 0, 0, 0, 0])?;
        let rows_per_strip = rows_per_strip(spec.width).min(spec.height);
        Ok(TiffWriter {
            out,
            spec,
            rows_per_strip,
            row_bytes: (spec.width as usize).div_ceil(8),
            strip: Vec::new(),
            rows_in_strip: 0,
            rows_done: 0,
            offsets: Vec::new(),
            counts: Vec::new(),
            pos: 8,
        })
    }

    /// Bytes of one packed row (`ceil(width / 8)`).
    pub fn row_bytes(&self) -> usize {
        self.row_bytes
    }

    /// Appends the next row: `ceil(width / 8)` bytes, leftmost pixel in the high bit, 1 = black.
    pub fn write_row(&mut self, row: &[u8]) -> io::Result<()> {
        if row.len() != self.row_bytes || self.rows_done >= self.spec.height {
            return Err(io::Error::new(
                io::ErrorKind::InvalidInput,
                format!(
                    "TIFF row {} of {}: {} bytes given, {} expected",
                    self.rows_done + 1,
                    self.spec.height,
                    row.len(),
                    self.row_bytes
                ),
            ));
        }
        match self.spec.compression {
            TiffCompression::None => self.strip.extend_from_slice(row),
            TiffCompression::PackBits => packbits_row(row, &mut self.strip),
        }
        self.rows_in_strip += 1;
        self.rows_done += 1;
        if self.rows_in_strip == self.rows_per_strip || self.rows_done == self.spec.height {
            self.flush_strip()?;
        }
        Ok(())
    }

    fn flush_strip(&mut self) -> io::Result<()> {
        let len = self.strip.len() as u64;
        if self.pos + len > u32::MAX as u64 {
            return Err(too_big());
        }
        self.out.write_all(&self.strip)?;
        self.offsets.push(self.pos as u32);
        self.counts.push(len as u32);
        self.pos += len;
        self.strip.clear();
        self.rows_in_strip = 0;
        Ok(())
    }

    /// Writes the IFD and patches the header. Every row must have been written.
    pub fn finish(mut self) -> io::Result<W> {
        if self.rows_done != self.spec.height {
            return Err(io::Error::new(
                io::ErrorKind::InvalidInput,
                format!(
                    "TIFF has {} of its {} rows",
                    self.rows_done, self.spec.height
                ),
            ));
        }
        // Out-of-line values, each at a word (even) boundary (TIFF 6.0 §2).
        let mut extra: Vec<u8> = Vec::new();
        let mut base = self.pos + (self.pos & 1);
        let pad = (base - self.pos) as usize;
        let place = |bytes: &[u8], extra: &mut Vec<u8>| -> u64 {
            let at = base + extra.len() as u64;
            extra.extend_from_slice(bytes);
            if extra.len() % 2 == 1 {
                extra.push(0);
            }
            at
        };
        let le32 = |v: &[u32]| v.iter().flat_map(|x| x.to_le_bytes()).collect::<Vec<u8>>();
        let n = self.offsets.len() as u32;
        let offsets_at = (n > 1).then(|| place(&le32(&self.offsets), &mut extra));
        let counts_at = (n > 1).then(|| place(&le32(&self.counts), &mut extra));
        let (xn, xd) = rational(self.spec.dpi_x);
        let (yn, yd) = rational(self.spec.dpi_y);
        let xres_at = place(&le32(&[xn, xd]), &mut extra);
        let yres_at = place(&le32(&[yn, yd]), &mut extra);
        let software = format!("umbra {}\0", env!("CARGO_PKG_VERSION"));
        let software_at = place(software.as_bytes(), &mut extra);
        base += extra.len() as u64;
        let ifd_at = base;

        // (tag, type, count, value or offset), ascending tags (TIFF 6.0 §2).
        let mut entries: Vec<(u16, u16, u32, u32)> = vec![
            (256, LONG, 1, self.spec.width),  // ImageWidth
            (257, LONG, 1, self.spec.height), // ImageLength
            (258, SHORT, 1, 1),               // BitsPerSample
            (259, SHORT, 1, self.spec.compression.code() as u32),
            (262, SHORT, 1, 0), // PhotometricInterpretation: WhiteIsZero, 1 = black
        ];
        entries.push((
            273,
            LONG,
            n,
            offsets_at.unwrap_or(self.offsets[0] as u64) as u32,
        ));
        entries.push((277, SHORT, 1, 1)); // SamplesPerPixel
        entries.push((278, LONG, 1, self.rows_per_strip));
        entries.push((
            279,
            LONG,
            n,
            counts_at.unwrap_or(self.counts[0] as u64) as u32,
        ));
        entries.push((282, RATIONAL, 1, xres_at as u32));
        entries.push((283, RATIONAL, 1, yres_at as u32));
        entries.push((296, SHORT, 1, 2)); // ResolutionUnit: inch
        entries.push((305, ASCII, software.len() as u32, software_at as u32));

        let mut ifd = Vec::with_capacity(2 + 12 * entries.len() + 4);
        ifd.extend_from_slice(&(entries.len() as u16).to_le_bytes());
        for (tag, typ, count, value) in entries {
            ifd.extend_from_slice(&tag.to_le_bytes());
            ifd.extend_from_slice(&typ.to_le_bytes());
            ifd.extend_from_slice(&count.to_le_bytes());
            // A SHORT value sits in the first two bytes of the field, little-endian.
            ifd.extend_from_slice(&value.to_le_bytes());
        }
        ifd.extend_from_slice(&0u32.to_le_bytes()); // no next IFD
        if ifd_at + ifd.len() as u64 > u32::MAX as u64 {
            return Err(too_big());
        }
        self.out.write_all(&vec![0u8; pad])?;
        self.out.write_all(&extra)?;
        self.out.write_all(&ifd)?;
        self.out.seek(SeekFrom::Start(4))?;
        self.out.write_all(&(ifd_at as u32).to_le_bytes())?;
        self.out.seek(SeekFrom::End(0))?;
        self.out.flush()?;
        Ok(self.out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The unpacking loop of TIFF 6.0 §9, written out as the spec's pseudo code.
    fn unpack(mut src: &[u8], expected: usize) -> Vec<u8> {
        let mut out = Vec::new();
        while out.len() < expected {
            let n = src[0] as i8;
            src = &src[1..];
            if n >= 0 {
                let k = n as usize + 1;
                out.extend_from_slice(&src[..k]);
                src = &src[k..];
            } else if n != -128 {
                out.extend(std::iter::repeat_n(src[0], (1 - n as i32) as usize));
                src = &src[1..];
            }
        }
        assert!(src.is_empty(), "bytes left over after the row");
        out
    }

    #[test]
    fn packbits_round_trips_by_the_spec_loop() {
        let mut rows: Vec<Vec<u8>> = vec![
            vec![],
            vec![7],
            vec![0; 1000],
            vec![0xFF; 129],
            (0..300).map(|i| (i * 37 % 251) as u8).collect(),
            vec![1, 1, 2, 3, 3, 3, 4, 5, 5],
        ];
        // A mix of long runs and short literals, as a film row has.
        let mut mixed = vec![0u8; 200];
        mixed.extend([0x0F, 0xF0, 0x55]);
        mixed.extend(vec![0xFF; 300]);
        rows.push(mixed);
        for row in rows {
            let mut packed = Vec::new();
            packbits_row(&row, &mut packed);
            assert_eq!(unpack(&packed, row.len()), row);
            // Worst case of TIFF 6.0 §9: at most one extra byte per 128.
            assert!(packed.len() <= row.len() + row.len().div_ceil(128));
        }
    }

    #[test]
    fn packbits_encodes_the_spec_example_form() {
        // A run of 3 equal bytes is a replicate run: header 1 − 3 = −2 (0xFE), then the byte.
        let mut out = Vec::new();
        packbits_row(&[0xAA, 0xAA, 0xAA], &mut out);
        assert_eq!(out, vec![0xFE, 0xAA]);
        out.clear();
        packbits_row(&[1, 2, 3], &mut out);
        assert_eq!(out, vec![2, 1, 2, 3]);
    }

    #[test]
    fn rationals() {
        assert_eq!(rational(10160.0), (10160, 1));
        let (n, d) = rational(25_400.0 / 47.25);
        assert!((n as f64 / d as f64 - 25_400.0 / 47.25).abs() < 1e-4);
    }
}
