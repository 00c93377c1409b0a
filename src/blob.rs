//! One binary container for everything the host hands the device: property
//! tables today, a device configuration later.
//!
//! Layout (all integers little-endian):
//!
//! | bytes | field |
//! |---|---|
//! | 0..4 | magic `b"PLYT"` |
//! | 4 | payload kind ([`KIND_PROPERTY_TABLE`], ...) |
//! | 5..7 | format version of that kind |
//! | 7..11 | payload length `n`, bytes |
//! | 11..11+n | payload: the kind's data in `postcard` encoding |
//! | 11+n..15+n | CRC-32 (ISO-HDLC polynomial, as in zlib and Ethernet) over bytes 0..11+n |
//!
//! [`open`] checks, in this order, the length, the magic, the kind, the
//! version, the declared length and the checksum, and hands back the payload
//! only if all agree; the kind's decoder then checks the content. Nothing here
//! allocates or panics. The CRC-32 detects every single-bit error and every
//! burst up to 32 bits (a property of any CRC of that degree; e.g. Koopman,
//! "32-bit cyclic redundancy codes for Internet applications", DSN 2002).

use core::fmt;

use crate::error::ConfigError;

/// Magic bytes at the start of every blob.
pub const MAGIC: [u8; 4] = *b"PLYT";
/// Bytes before the payload.
pub const HEADER_LEN: usize = 11;
/// Bytes after the payload (the checksum).
pub const TRAILER_LEN: usize = 4;
/// Payload kind of a gas property table ([`crate::gas::table`]).
pub const KIND_PROPERTY_TABLE: u8 = 1;

const CRC: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

/// Why a blob was refused. The model or configuration the device had stays in
/// force.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum BlobError {
    /// Shorter than its header and trailer, or than the length it declares.
    Truncated {
        /// Bytes the blob needs.
        needed: u32,
        /// Bytes it has.
        found: u32,
    },
    /// Longer than the length it declares.
    TrailingBytes,
    /// Not a blob of this project.
    BadMagic,
    /// A blob of another kind (a configuration where a table was expected).
    WrongKind {
        /// Kind the reader expects.
        expected: u8,
        /// Kind in the blob.
        found: u8,
    },
    /// A format version this build cannot read.
    WrongVersion {
        /// Version the reader expects.
        expected: u16,
        /// Version in the blob.
        found: u16,
    },
    /// The checksum does not match: the blob was corrupted.
    Checksum {
        /// Checksum stored in the blob.
        stored: u32,
        /// Checksum of the bytes received.
        computed: u32,
    },
    /// The payload does not decode as the kind's data.
    Decode,
    /// The payload holds more entries than the reader's fixed capacity.
    Capacity {
        /// Which list.
        field: &'static str,
        /// Entries the reader can hold.
        capacity: u32,
        /// Entries in the blob.
        found: u32,
    },
    /// The payload decodes but its content is not physically or structurally
    /// valid.
    Invalid(ConfigError),
    /// The output buffer is too small (writing a blob).
    BufferTooSmall,
}

impl fmt::Display for BlobError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            BlobError::Truncated { needed, found } => {
                write!(f, "blob truncated: {found} bytes of {needed}")
            }
            BlobError::TrailingBytes => f.write_str("blob longer than its declared length"),
            BlobError::BadMagic => f.write_str("not a polytrope blob (magic bytes)"),
            BlobError::WrongKind { expected, found } => {
                write!(f, "blob kind {found}, expected {expected}")
            }
            BlobError::WrongVersion { expected, found } => {
                write!(
                    f,
                    "blob format version {found}, this build reads {expected}"
                )
            }
            BlobError::Checksum { stored, computed } => write!(
                f,
                "blob checksum mismatch (stored {stored:#010x}, computed {computed:#010x})"
            ),
            BlobError::Decode => f.write_str("blob payload does not decode"),
            BlobError::Capacity {
                field,
                capacity,
                found,
            } => write!(f, "blob {field}: {found} entries, capacity {capacity}"),
            BlobError::Invalid(e) => write!(f, "blob content invalid: {e}"),
            BlobError::BufferTooSmall => f.write_str("output buffer too small for the blob"),
        }
    }
}

impl core::error::Error for BlobError {}

fn sat_u32(n: usize) -> u32 {
    u32::try_from(n).unwrap_or(u32::MAX)
}

/// CRC-32 (ISO-HDLC) of `bytes`.
pub fn checksum(bytes: &[u8]) -> u32 {
    CRC.checksum(bytes)
}

/// Checks a blob's framing and checksum and returns its payload.
pub fn open(blob: &[u8], kind: u8, version: u16) -> Result<&[u8], BlobError> {
    let min = HEADER_LEN + TRAILER_LEN;
    let (Some(head), Some(rest)) = (blob.get(..HEADER_LEN), blob.get(HEADER_LEN..)) else {
        return Err(BlobError::Truncated {
            needed: sat_u32(min),
            found: sat_u32(blob.len()),
        });
    };
    let byte = |i: usize| head.get(i).copied().unwrap_or(0);
    if head.get(..4) != Some(&MAGIC[..]) {
        return Err(BlobError::BadMagic);
    }
    if byte(4) != kind {
        return Err(BlobError::WrongKind {
            expected: kind,
            found: byte(4),
        });
    }
    let found_version = u16::from_le_bytes([byte(5), byte(6)]);
    if found_version != version {
        return Err(BlobError::WrongVersion {
            expected: version,
            found: found_version,
        });
    }
    let declared = u32::from_le_bytes([byte(7), byte(8), byte(9), byte(10)]);
    let needed = u64::from(declared) + (HEADER_LEN + TRAILER_LEN) as u64;
    let found = blob.len() as u64;
    if found < needed {
        return Err(BlobError::Truncated {
            needed: u32::try_from(needed).unwrap_or(u32::MAX),
            found: sat_u32(blob.len()),
        });
    }
    if found > needed {
        return Err(BlobError::TrailingBytes);
    }
    let n = declared as usize;
    let (Some(payload), Some(trailer), Some(covered)) = (
        rest.get(..n),
        rest.get(n..n + TRAILER_LEN),
        blob.get(..HEADER_LEN + n),
    ) else {
        return Err(BlobError::Truncated {
            needed: u32::try_from(needed).unwrap_or(u32::MAX),
            found: sat_u32(blob.len()),
        });
    };
    let t = |i: usize| trailer.get(i).copied().unwrap_or(0);
    let stored = u32::from_le_bytes([t(0), t(1), t(2), t(3)]);
    let computed = checksum(covered);
    if stored != computed {
        return Err(BlobError::Checksum { stored, computed });
    }
    Ok(payload)
}

/// Writes header and checksum around a payload that the caller has already
/// written at `out[HEADER_LEN..HEADER_LEN + payload_len]`; returns the blob's
/// total length.
pub fn seal(
    out: &mut [u8],
    kind: u8,
    version: u16,
    payload_len: usize,
) -> Result<usize, BlobError> {
    let total = HEADER_LEN + payload_len + TRAILER_LEN;
    let declared = u32::try_from(payload_len).map_err(|_| BlobError::BufferTooSmall)?;
    if out.len() < total {
        return Err(BlobError::BufferTooSmall);
    }
    let mut header = [0u8; HEADER_LEN];
    for (dst, src) in header.iter_mut().zip(
        MAGIC
            .iter()
            .chain(core::iter::once(&kind))
            .chain(version.to_le_bytes().iter())
            .chain(declared.to_le_bytes().iter()),
    ) {
        *dst = *src;
    }
    let Some(head) = out.get_mut(..HEADER_LEN) else {
        return Err(BlobError::BufferTooSmall);
    };
    head.copy_from_slice(&header);
    let crc = checksum(out.get(..HEADER_LEN + payload_len).unwrap_or(&[]));
    let Some(trailer) = out.get_mut(HEADER_LEN + payload_len..total) else {
        return Err(BlobError::BufferTooSmall);
    };
    trailer.copy_from_slice(&crc.to_le_bytes());
    Ok(total)
}

/// The writable payload area of an output buffer (after the header).
pub fn payload_area(out: &mut [u8]) -> &mut [u8] {
    let end = out.len().saturating_sub(TRAILER_LEN);
    out.get_mut(HEADER_LEN..end).unwrap_or(&mut [])
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample(out: &mut [u8; 64]) -> usize {
        let payload = b"compressor train";
        payload_area(out)[..payload.len()].copy_from_slice(payload);
        seal(out, KIND_PROPERTY_TABLE, 3, payload.len()).unwrap()
    }

    #[test]
    fn round_trip() {
        let mut buf = [0u8; 64];
        let n = sample(&mut buf);
        assert_eq!(n, HEADER_LEN + 16 + TRAILER_LEN);
        assert_eq!(
            open(&buf[..n], KIND_PROPERTY_TABLE, 3).unwrap(),
            b"compressor train"
        );
    }

    #[test]
    fn crc_check_value() {
        // The catalogue check value of CRC-32/ISO-HDLC for "123456789"
        // (Greg Cook's CRC catalogue, reproduced by the `crc` crate).
        assert_eq!(checksum(b"123456789"), 0xCBF4_3926);
    }

    #[test]
    fn every_truncation_and_bit_flip_refused() {
        let mut buf = [0u8; 64];
        let n = sample(&mut buf);
        for len in 0..n {
            assert!(open(&buf[..len], KIND_PROPERTY_TABLE, 3).is_err(), "{len}");
        }
        for bit in 0..n * 8 {
            let mut b = buf;
            b[bit / 8] ^= 1 << (bit % 8);
            assert!(open(&b[..n], KIND_PROPERTY_TABLE, 3).is_err(), "bit {bit}");
        }
        assert!(matches!(
            open(&buf[..n], KIND_PROPERTY_TABLE, 4),
            Err(BlobError::WrongVersion { found: 3, .. })
        ));
        assert!(matches!(
            open(&buf[..n], 2, 3),
            Err(BlobError::WrongKind { found: 1, .. })
        ));
        assert_eq!(
            open(&buf[..n + 1], KIND_PROPERTY_TABLE, 3),
            Err(BlobError::TrailingBytes)
        );
    }

    #[test]
    fn small_buffer_refused() {
        let mut small = [0u8; 10];
        assert_eq!(
            seal(&mut small, KIND_PROPERTY_TABLE, 1, 0),
            Err(BlobError::BufferTooSmall)
        );
    }
}
