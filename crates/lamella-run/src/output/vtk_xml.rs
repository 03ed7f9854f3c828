//! Reading back the VTK XML files Lamella writes: start-tag attributes and inline binary
//! arrays (base64 text of a UInt64 block header and zlib-compressed blocks, little-endian).
//!
//! Every length comes from the file and is checked before it is used, and memory grows only
//! with data actually decoded: a damaged or hostile file gives an error, never a panic or an
//! allocation the file does not back.

use std::io::Read;

use base64::Engine as _;
use base64::engine::general_purpose::STANDARD as BASE64;
use flate2::read::ZlibDecoder;

/// The `key="value"` attributes of a start tag, in order.
pub(crate) type Attributes<'a> = Vec<(&'a str, &'a str)>;

/// The attributes of the first start tag `<name ...>` at or after `from` in `text`, and the
/// byte offset just past the tag's `>`.
pub(crate) fn start_tag<'a>(
    text: &'a str,
    name: &str,
    from: usize,
) -> Result<(Attributes<'a>, usize), String> {
    let rest = text.get(from..).ok_or("the document ends early")?;
    let open = format!("<{name}");
    let mut searched = 0;
    loop {
        let at = rest[searched..]
            .find(&open)
            .ok_or_else(|| format!("no <{name}> element"))?
            + searched;
        let after = &rest[at + open.len()..];
        // `<Piece` must not match `<PieceX`: the name ends at a space, `>` or `/`.
        if after.starts_with([' ', '>', '/', '\n', '\t', '\r']) {
            let close = after
                .find('>')
                .ok_or_else(|| format!("the <{name}> tag is not closed"))?;
            let inner = after[..close].trim_end_matches('/');
            let attributes = attributes(inner).map_err(|e| format!("<{name}>: {e}"))?;
            return Ok((attributes, from + at + open.len() + close + 1));
        }
        searched = at + open.len();
    }
}

/// `key="value"` pairs of a start tag's inside.
fn attributes(mut inner: &str) -> Result<Attributes<'_>, String> {
    let mut found = Vec::new();
    loop {
        inner = inner.trim_start();
        if inner.is_empty() {
            return Ok(found);
        }
        let (key, rest) = inner
            .split_once('=')
            .ok_or_else(|| format!("attribute text {inner:?} has no `=`"))?;
        let rest = rest
            .trim_start()
            .strip_prefix('"')
            .ok_or_else(|| format!("attribute {} is not quoted", key.trim()))?;
        let (value, rest) = rest
            .split_once('"')
            .ok_or_else(|| format!("attribute {} is not closed", key.trim()))?;
        found.push((key.trim(), value));
        inner = rest;
    }
}

/// The value of attribute `key` in `attributes`.
pub(crate) fn attribute<'a>(attributes: &[(&str, &'a str)], key: &str) -> Option<&'a str> {
    attributes.iter().find(|(k, _)| *k == key).map(|(_, v)| *v)
}

/// Decodes the inline binary array `text` (header type UInt64, zlib compression) into exactly
/// `expected` bytes.
pub(crate) fn decode_binary(text: &str, expected: usize) -> Result<Vec<u8>, String> {
    let text = text.trim();
    // The header starts with three UInt64 (block count, block size, last block size): 24 bytes,
    // 32 base64 characters with no padding.
    let counts = BASE64
        .decode(text.get(..32).ok_or("the binary data is cut short")?)
        .map_err(|e| format!("the block header is not base64: {e}"))?;
    let blocks = u64_at(&counts, 0)?;
    // Each block takes at least one compressed byte, so a count beyond the text is damage.
    let blocks = usize::try_from(blocks)
        .ok()
        .filter(|&b| b >= 1 && b <= text.len())
        .ok_or_else(|| format!("the block header gives {blocks} blocks"))?;
    let header_bytes = (3 + blocks) * 8;
    let header_chars = header_bytes.div_ceil(3) * 4;
    let header = BASE64
        .decode(
            text.get(..header_chars)
                .ok_or("the binary data is cut short in its block header")?,
        )
        .map_err(|e| format!("the block header is not base64: {e}"))?;
    if header.len() != header_bytes {
        return Err("the block header has the wrong length".into());
    }
    let data = BASE64
        .decode(
            text.get(header_chars..)
                .ok_or("the binary data is cut short")?,
        )
        .map_err(|e| format!("the compressed data is not base64: {e}"))?;
    let mut out = Vec::new();
    let mut start = 0usize;
    for block in 0..blocks {
        let size = usize::try_from(u64_at(&header, 3 + block)?)
            .map_err(|_| "a block size does not fit in memory")?;
        let end = start
            .checked_add(size)
            .filter(|&end| end <= data.len())
            .ok_or("a compressed block runs past the end of the data")?;
        let room = (expected - out.len()) as u64 + 1;
        ZlibDecoder::new(&data[start..end])
            .take(room)
            .read_to_end(&mut out)
            .map_err(|e| format!("a compressed block cannot be inflated: {e}"))?;
        if out.len() > expected {
            return Err(format!("it holds more than the {expected} bytes expected"));
        }
        start = end;
    }
    if start != data.len() {
        return Err("bytes after the last compressed block".into());
    }
    if out.len() != expected {
        return Err(format!(
            "it holds {} bytes where {expected} are expected",
            out.len()
        ));
    }
    Ok(out)
}

/// The `index`-th little-endian UInt64 of `bytes`.
fn u64_at(bytes: &[u8], index: usize) -> Result<u64, String> {
    index
        .checked_mul(8)
        .and_then(|at| bytes.get(at..at + 8))
        .and_then(|b| b.try_into().ok())
        .map(u64::from_le_bytes)
        .ok_or_else(|| "the block header is cut short".to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn attributes_of_a_start_tag_and_their_faults() {
        let text = r#"<A><Piece NumberOfPoints="3" x = "a b"/><PieceX k="1">"#;
        let (found, end) = start_tag(text, "Piece", 0).unwrap();
        assert_eq!(found, [("NumberOfPoints", "3"), ("x", "a b")]);
        assert_eq!(attribute(&found, "x"), Some("a b"));
        assert_eq!(&text[end..end + 7], "<PieceX");
        assert!(start_tag(text, "Piece", end).is_err());
        assert!(start_tag("<Piece a=1>", "Piece", 0).is_err());
        assert!(start_tag("<Piece a=\"1>", "Piece", 0).is_err());
        assert!(start_tag("<Piece a=\"1\"", "Piece", 0).is_err());
        assert!(start_tag("<Piece>", "Piece", 99).is_err());
    }

    #[test]
    fn binary_arrays_are_length_checked() {
        let bytes: Vec<u8> = (0..100u8).collect();
        let mut compressed = Vec::new();
        let mut encoder =
            flate2::write::ZlibEncoder::new(&mut compressed, flate2::Compression::new(5));
        std::io::Write::write_all(&mut encoder, &bytes).unwrap();
        encoder.finish().unwrap();
        let mut header = Vec::new();
        for x in [1u64, 32768, 100, compressed.len() as u64] {
            header.extend_from_slice(&x.to_le_bytes());
        }
        let text = BASE64.encode(&header) + &BASE64.encode(&compressed);
        assert_eq!(decode_binary(&text, 100).unwrap(), bytes);
        assert!(decode_binary(&text, 99).unwrap_err().contains("more than"));
        assert!(decode_binary(&text, 101).unwrap_err().contains("100 bytes"));
        assert!(decode_binary(&text[..40], 100).is_err());
        assert!(decode_binary("", 100).is_err());
    }
}
