//! A minimal Protocol Buffers *writer*: just what the ONNX exporter needs.
//!
//! Wire format from Google, "Protocol Buffers: Encoding" (the programming
//! guide's "Encoding" page): every record is a key `(field_number << 3) |
//! wire_type` written as a base-128 varint, then the payload. Wire types used
//! here: 0 `VARINT` (int32, int64, enums), 2 `LEN` (strings, bytes, embedded
//! messages, packed repeated scalars) and 5 `I32` (float). Negative `int32`
//! and `int64` values are written as the ten-byte varint of their 64-bit two's
//! complement, as the guide prescribes for the `intN` types (not ZigZag, which
//! is only for `sintN`).
//!
//! Embedded messages are encoded into their own buffer first and then
//! appended with a length prefix, so each nesting level copies its payload
//! once. The bulk of a model, the tensors' `raw_data`, sits two levels below
//! the model (`ModelProto.graph.initializer`), so it is copied three times in
//! all; for the networks this is meant for (a few megabytes) that is cheap.

/// Wire type 0: base-128 varint.
const VARINT: u8 = 0;
/// Wire type 2: length-delimited.
const LEN: u8 = 2;
/// Wire type 5: four little-endian bytes.
const I32: u8 = 5;

/// An append-only protobuf message being encoded.
#[derive(Debug, Default, Clone)]
pub(crate) struct Message {
    buf: Vec<u8>,
}

impl Message {
    /// An empty message.
    pub(crate) fn new() -> Message {
        Message { buf: Vec::new() }
    }

    /// The encoded bytes.
    pub(crate) fn into_bytes(self) -> Vec<u8> {
        self.buf
    }

    /// The number of bytes encoded so far.
    #[cfg(test)]
    pub(crate) fn len(&self) -> usize {
        self.buf.len()
    }

    /// Appends `v` as a base-128 varint (least significant group first).
    fn varint(&mut self, mut v: u64) {
        while v >= 0x80 {
            self.buf.push((v as u8 & 0x7f) | 0x80);
            v >>= 7;
        }
        self.buf.push(v as u8);
    }

    /// Appends a record key.
    fn key(&mut self, field: u32, wire_type: u8) {
        self.varint((u64::from(field) << 3) | u64::from(wire_type));
    }

    /// An `int64` field (also used for `int32` and enums: a negative value is
    /// sign-extended to 64 bits, as the encoding guide prescribes).
    pub(crate) fn int64(&mut self, field: u32, v: i64) {
        self.key(field, VARINT);
        self.varint(v as u64);
    }

    /// A `float` field.
    pub(crate) fn float(&mut self, field: u32, v: f32) {
        self.key(field, I32);
        self.buf.extend_from_slice(&v.to_le_bytes());
    }

    /// A `bytes` field.
    pub(crate) fn bytes(&mut self, field: u32, v: &[u8]) {
        self.key(field, LEN);
        self.varint(v.len() as u64);
        self.buf.extend_from_slice(v);
    }

    /// A `string` field (UTF-8, as Rust strings are).
    pub(crate) fn string(&mut self, field: u32, v: &str) {
        self.bytes(field, v.as_bytes());
    }

    /// An embedded message field.
    pub(crate) fn message(&mut self, field: u32, m: Message) {
        self.bytes(field, &m.buf);
    }

    /// A packed repeated `int64` field (one `LEN` record holding the varints).
    /// An empty list writes nothing, which a decoder reads as an empty list.
    pub(crate) fn packed_int64(&mut self, field: u32, values: &[i64]) {
        if values.is_empty() {
            return;
        }
        let mut inner = Message::new();
        for &v in values {
            inner.varint(v as u64);
        }
        self.message(field, inner);
    }
}

#[cfg(test)]
pub(crate) mod decode {
    //! A small decoder used only by tests, to read back what was written.

    /// One decoded record.
    #[derive(Debug, Clone, PartialEq)]
    pub(crate) enum Value {
        /// Wire type 0.
        Varint(u64),
        /// Wire type 1.
        Fixed64([u8; 8]),
        /// Wire type 2.
        Len(Vec<u8>),
        /// Wire type 5.
        Fixed32([u8; 4]),
    }

    /// Reads a varint at `*pos`, advancing it.
    pub(crate) fn varint(buf: &[u8], pos: &mut usize) -> Result<u64, String> {
        let mut v = 0u64;
        for shift in (0..64).step_by(7) {
            let b = *buf.get(*pos).ok_or("truncated varint")?;
            *pos += 1;
            v |= u64::from(b & 0x7f) << shift;
            if b & 0x80 == 0 {
                return Ok(v);
            }
        }
        Err("varint longer than ten bytes".into())
    }

    /// All records of a message, in order, as (field number, value).
    pub(crate) fn records(buf: &[u8]) -> Result<Vec<(u32, Value)>, String> {
        let mut pos = 0;
        let mut out = Vec::new();
        while pos < buf.len() {
            let key = varint(buf, &mut pos)?;
            let field = u32::try_from(key >> 3).map_err(|_| "field number too large")?;
            let take = |pos: &mut usize, n: usize| -> Result<Vec<u8>, String> {
                let end = pos.checked_add(n).ok_or("length overflow")?;
                let s = buf.get(*pos..end).ok_or("truncated payload")?.to_vec();
                *pos = end;
                Ok(s)
            };
            let value = match key & 7 {
                0 => Value::Varint(varint(buf, &mut pos)?),
                1 => Value::Fixed64(take(&mut pos, 8)?.try_into().expect("eight bytes")),
                2 => {
                    let n = varint(buf, &mut pos)? as usize;
                    Value::Len(take(&mut pos, n)?)
                }
                5 => Value::Fixed32(take(&mut pos, 4)?.try_into().expect("four bytes")),
                w => return Err(format!("unexpected wire type {w}")),
            };
            out.push((field, value));
        }
        Ok(out)
    }

    /// The payloads of every record with `field` in a message.
    pub(crate) fn fields(buf: &[u8], field: u32) -> Vec<Value> {
        records(buf)
            .expect("valid protobuf")
            .into_iter()
            .filter(|(f, _)| *f == field)
            .map(|(_, v)| v)
            .collect()
    }

    /// The length-delimited payloads of `field`.
    pub(crate) fn len_fields(buf: &[u8], field: u32) -> Vec<Vec<u8>> {
        fields(buf, field)
            .into_iter()
            .map(|v| match v {
                Value::Len(b) => b,
                other => panic!("field {field} is not length-delimited: {other:?}"),
            })
            .collect()
    }

    /// The strings of `field`.
    pub(crate) fn strings(buf: &[u8], field: u32) -> Vec<String> {
        len_fields(buf, field)
            .into_iter()
            .map(|b| String::from_utf8(b).expect("UTF-8"))
            .collect()
    }

    /// The single varint of `field`, as i64.
    pub(crate) fn int(buf: &[u8], field: u32) -> Option<i64> {
        fields(buf, field).into_iter().last().map(|v| match v {
            Value::Varint(x) => x as i64,
            other => panic!("field {field} is not a varint: {other:?}"),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::decode::{records, varint, Value};
    use super::*;

    fn hex(bytes: &[u8]) -> String {
        bytes.iter().map(|b| format!("{b:02x}")).collect()
    }

    // Hand-checked encodings from Google, "Protocol Buffers: Encoding"
    // (protobuf.dev, programming guide "Encoding"): the worked examples
    // Test1 (a = 150), Test2 (b = "testing"), Test3 (c.a = 150), the
    // two's-complement int32 -2, and Test5 (packed f = 3, 270, 86942).
    // 300 = `ac 02` is the varint example of an earlier edition of the same
    // guide, and checked by hand: 300 = 0b10_0101100, low group 0x2c with
    // the continuation bit (0xac), then 0x02.

    #[test]
    fn varint_300_is_ac_02_and_reads_back() {
        let mut m = Message::new();
        m.varint(300);
        assert_eq!(hex(&m.buf), "ac02");
        let mut pos = 0;
        assert_eq!(varint(&m.buf, &mut pos), Ok(300));
        assert_eq!(pos, 2);
    }

    #[test]
    fn varint_edges_round_trip() {
        for v in [
            0u64,
            1,
            127,
            128,
            150,
            16_383,
            16_384,
            u32::MAX as u64,
            u64::MAX,
        ] {
            let mut m = Message::new();
            m.varint(v);
            let mut pos = 0;
            assert_eq!(varint(&m.buf, &mut pos), Ok(v));
            assert_eq!(pos, m.len());
        }
        // u64::MAX takes all ten bytes (common practice, no source: 64 / 7 rounded up).
        let mut m = Message::new();
        m.varint(u64::MAX);
        assert_eq!(m.len(), 10);
    }

    #[test]
    fn guide_test1_a_150() {
        let mut m = Message::new();
        m.int64(1, 150);
        assert_eq!(hex(&m.buf), "089601");
        assert_eq!(records(&m.buf), Ok(vec![(1, Value::Varint(150))]));
    }

    #[test]
    fn guide_test2_string_testing() {
        let mut m = Message::new();
        m.string(2, "testing");
        assert_eq!(hex(&m.buf), "120774657374696e67");
        assert_eq!(
            records(&m.buf),
            Ok(vec![(2, Value::Len(b"testing".to_vec()))])
        );
    }

    #[test]
    fn guide_test3_embedded_message() {
        let mut inner = Message::new();
        inner.int64(1, 150);
        let mut m = Message::new();
        m.message(3, inner);
        assert_eq!(hex(&m.buf), "1a03089601");
    }

    #[test]
    fn guide_negative_two_takes_ten_bytes() {
        let mut m = Message::new();
        m.int64(1, -2);
        assert_eq!(hex(&m.buf), "08feffffffffffffffff01");
        let recs = records(&m.buf).unwrap();
        assert_eq!(recs, vec![(1, Value::Varint(-2i64 as u64))]);
    }

    #[test]
    fn guide_test5_packed_repeated() {
        let mut m = Message::new();
        m.packed_int64(6, &[3, 270, 86942]);
        assert_eq!(hex(&m.buf), "3206038e029ea705");
        let mut m = Message::new();
        m.packed_int64(6, &[]);
        assert!(m.buf.is_empty());
    }

    #[test]
    fn float_is_four_little_endian_bytes() {
        // IEEE 754 binary32 of 1.0 is 0x3f800000 (IEEE Std 754-2008);
        // field 2, wire type 5 gives key 0x15.
        let mut m = Message::new();
        m.float(2, 1.0);
        assert_eq!(hex(&m.buf), "150000803f");
        assert_eq!(
            records(&m.buf),
            Ok(vec![(2, Value::Fixed32(1.0f32.to_le_bytes()))])
        );
    }

    #[test]
    fn large_field_numbers_use_multi_byte_keys() {
        // Field 16, wire type 0: key 128 = `80 01`.
        let mut m = Message::new();
        m.int64(16, 1);
        assert_eq!(hex(&m.buf), "800101");
    }
}
