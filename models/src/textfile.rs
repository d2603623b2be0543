//! Reading a user's text file: UTF-8 checked, and an encoding problem said with its line, column and what to do.
//!
//! `std::fs::read_to_string` says only "stream did not contain valid UTF-8".
//! A plant engineer's file saved by a spreadsheet or an old editor is often
//! Latin-1 / Windows-1252 or UTF-16; the message names the first bad byte's
//! position and the encoding to save as.

use std::path::Path;

/// Why a file could not be read as text.
#[derive(Debug)]
pub enum TextError {
    /// The file could not be read at all (missing, permissions).
    Io(std::io::Error),
    /// The bytes are not UTF-8: where, what, and what to do.
    Encoding {
        /// 1-based line of the first bad byte (absent for a UTF-16 file).
        line: Option<usize>,
        /// 1-based column (in characters) of the first bad byte.
        column: Option<usize>,
        /// What is wrong, in words.
        message: String,
        /// What to do about it.
        hint: &'static str,
    },
}

/// The hint every encoding problem gives.
pub const SAVE_AS_UTF8: &str =
    "save the file as UTF-8 (in most editors: Save As, then Encoding: UTF-8), then run again";

/// Read `path` as UTF-8 text (a UTF-8 byte-order mark is dropped).
pub fn read_text(path: &Path) -> Result<String, TextError> {
    let bytes = std::fs::read(path).map_err(TextError::Io)?;
    decode(bytes)
}

/// `bytes` as UTF-8 text, or where and why not.
pub fn decode(mut bytes: Vec<u8>) -> Result<String, TextError> {
    if bytes.starts_with(&[0xEF, 0xBB, 0xBF]) {
        bytes.drain(..3);
    }
    if bytes.starts_with(&[0xFF, 0xFE]) || bytes.starts_with(&[0xFE, 0xFF]) {
        return Err(TextError::Encoding {
            line: None,
            column: None,
            message: "the file is UTF-16 text (it starts with a UTF-16 byte-order mark), not UTF-8".into(),
            hint: SAVE_AS_UTF8,
        });
    }
    String::from_utf8(bytes).map_err(|e| {
        let good = e.utf8_error().valid_up_to();
        let bytes = e.as_bytes();
        let before = std::str::from_utf8(&bytes[..good]).expect("valid up to here");
        let line = before.matches('\n').count() + 1;
        let column = before.rsplit('\n').next().unwrap_or("").chars().count() + 1;
        // Many zero bytes: UTF-16 without a mark; otherwise an 8-bit code page.
        let zeros = bytes.iter().take(4096).filter(|&&b| b == 0).count();
        let looks = if zeros * 4 > bytes.len().min(4096) {
            "it looks like UTF-16 without a byte-order mark"
        } else {
            "it looks like Latin-1 or Windows-1252, as older editors and spreadsheets save"
        };
        TextError::Encoding {
            line: Some(line),
            column: Some(column),
            message: format!(
                "the file is not UTF-8 text: byte 0x{:02X} in column {column} is not UTF-8 ({looks})",
                bytes[good]
            ),
            hint: SAVE_AS_UTF8,
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn latin1_and_utf16_are_named_with_their_position() {
        let latin1 = b"plant: x\nname: Stra\xdfe\n".to_vec();
        match decode(latin1) {
            Err(TextError::Encoding { line, column, message, .. }) => {
                assert_eq!((line, column), (Some(2), Some(11)));
                assert!(message.contains("0xDF") && message.contains("Latin-1"), "{message}");
            }
            other => panic!("{other:?}"),
        }
        let utf16: Vec<u8> =
            [0xFF, 0xFE].into_iter().chain("plant: x\n".encode_utf16().flat_map(u16::to_le_bytes)).collect();
        match decode(utf16) {
            Err(TextError::Encoding { message, .. }) => assert!(message.contains("UTF-16"), "{message}"),
            other => panic!("{other:?}"),
        }
        assert_eq!(decode(b"\xEF\xBB\xBFplant: x\n".to_vec()).unwrap(), "plant: x\n");
    }
}
