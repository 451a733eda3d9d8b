//! The model file: one file holding the network's sizes, its alphabet and its weights.
//!
//! Layout: the 8 magic bytes `MSTRLINE`, a little-endian `u32` format version, a `u32` length and
//! that many bytes of JSON ([`ModelHeader`]), then the weights as a burn record (burnpack bytes)
//! up to the end of the file. A foreign or damaged file fails with a clear [`Error::Model`].

use burn::module::Module;
use burn::store::ModuleRecord;
use burn::tensor::{Bytes, Device};
use serde::{Deserialize, Serialize};

use super::charset::Charset;
use super::net::{LineNet, LineNetConfig};
use crate::{Error, Result};

/// First bytes of every model file.
pub const MAGIC: &[u8; 8] = b"MSTRLINE";
/// Format version this build reads and writes.
pub const VERSION: u32 = 1;

/// What the JSON part of a model file says.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ModelHeader {
    /// Network sizes.
    #[serde(deserialize_with = "config_of_any_version")]
    pub config: LineNetConfig,
    /// The alphabet, class 1 first (class 0 is the blank).
    pub alphabet: String,
    /// Free text: how the model was made.
    #[serde(default)]
    pub note: String,
    /// The order the model was taught to write a line's characters in (files from before this
    /// field was added are in logical order).
    #[serde(default)]
    pub label_order: LabelOrder,
}

/// A header's network sizes; files from before `frame_columns` existed read 4 columns a frame.
fn config_of_any_version<'de, D: serde::Deserializer<'de>>(
    d: D,
) -> std::result::Result<LineNetConfig, D::Error> {
    let mut value = serde_json::Value::deserialize(d)?;
    if let Some(map) = value.as_object_mut() {
        map.entry("frame_columns").or_insert(4.into());
    }
    serde_json::from_value(value).map_err(serde::de::Error::custom)
}

/// The order of the characters in a model's labels and outputs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum LabelOrder {
    /// Logical (typed) order. The network reads from the right edge, so left-to-right runs
    /// (numbers, Latin) come to it backwards, which CTC's monotonic alignment cannot follow.
    #[default]
    Logical,
    /// The order the characters stand in from the line's right edge
    /// ([`crate::text::bidi::reading_order`]): left-to-right runs turned round.
    Reading,
}

/// Write a network and its header as model-file bytes.
pub fn model_bytes(net: &LineNet, header: &ModelHeader) -> Result<Vec<u8>> {
    let json = serde_json::to_vec(header)
        .map_err(|e| Error::Model(format!("cannot encode header: {e}")))?;
    let record = net
        .clone()
        .into_record()
        .into_bytes()
        .map_err(|e| Error::Model(format!("cannot encode weights: {e}")))?;
    let mut out = Vec::with_capacity(16 + json.len() + record.len());
    out.extend_from_slice(MAGIC);
    out.extend_from_slice(&VERSION.to_le_bytes());
    out.extend_from_slice(&(json.len() as u32).to_le_bytes());
    out.extend_from_slice(&json);
    out.extend_from_slice(&record);
    Ok(out)
}

/// Read the header of model-file bytes; returns it and where the weights start.
pub fn read_header(bytes: &[u8]) -> Result<(ModelHeader, usize)> {
    if bytes.len() < 16 || &bytes[..8] != MAGIC {
        return Err(Error::Model(
            "not a mistara model file (wrong magic bytes)".into(),
        ));
    }
    let version = u32::from_le_bytes(bytes[8..12].try_into().expect("4 bytes"));
    if version != VERSION {
        return Err(Error::Model(format!(
            "model file format version {version}; this build reads version {VERSION}"
        )));
    }
    let len = u32::from_le_bytes(bytes[12..16].try_into().expect("4 bytes")) as usize;
    let json = bytes
        .get(16..16 + len)
        .ok_or_else(|| Error::Model("model file ends inside its header (truncated?)".into()))?;
    let header: ModelHeader = serde_json::from_slice(json)
        .map_err(|e| Error::Model(format!("model header is damaged: {e}")))?;
    Ok((header, 16 + len))
}

/// Rebuild a network from model-file bytes on `device`.
pub fn load_net(bytes: &[u8], device: &Device) -> Result<(ModelHeader, LineNet)> {
    let (header, start) = read_header(bytes)?;
    let ours: String = (1..Charset::new().classes())
        .filter_map(|k| Charset::new().char_of(k))
        .collect();
    if header.alphabet != ours || header.config.classes != Charset::new().classes() {
        return Err(Error::Model(
            "the model was trained for another alphabet than this build's".into(),
        ));
    }
    let record = ModuleRecord::from_bytes(Bytes::from_bytes_vec(bytes[start..].to_vec()))
        .map_err(|e| Error::Model(format!("model weights are damaged: {e}")))?;
    let net = header
        .config
        .init(device)
        .try_load_record(record)
        .map_err(|e| Error::Model(format!("model weights do not fit its header: {e}")))?;
    Ok((header, net))
}

/// The alphabet string written into headers.
pub fn alphabet() -> String {
    let cs = Charset::new();
    (1..cs.classes()).filter_map(|k| cs.char_of(k)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tiny() -> (LineNetConfig, LineNet) {
        let cfg = LineNetConfig::new(Charset::new().classes())
            .with_hidden(8)
            .with_channels([4, 4, 4]);
        let net = cfg.init(&Device::flex());
        (cfg, net)
    }

    #[test]
    fn round_trip_gives_the_same_outputs() {
        let (cfg, net) = tiny();
        let header = ModelHeader {
            config: cfg,
            alphabet: alphabet(),
            note: "test".into(),
            label_order: LabelOrder::Reading,
        };
        let bytes = model_bytes(&net, &header).unwrap();
        let (h2, net2) = load_net(&bytes, &Device::flex()).unwrap();
        assert_eq!(h2.note, "test");
        assert_eq!(h2.label_order, LabelOrder::Reading);
        let x = burn::tensor::Tensor::<4>::ones([1, 1, 32, 16], &Device::flex());
        let a: Vec<f32> = net
            .valid()
            .forward(x.clone())
            .into_data()
            .try_into_vec::<f32>()
            .unwrap();
        let b: Vec<f32> = net2
            .valid()
            .forward(x)
            .into_data()
            .try_into_vec::<f32>()
            .unwrap();
        assert_eq!(a, b);
    }

    #[test]
    fn foreign_and_truncated_files_are_refused() {
        let (cfg, net) = tiny();
        let bytes = model_bytes(
            &net,
            &ModelHeader {
                config: cfg,
                alphabet: alphabet(),
                note: String::new(),
                label_order: LabelOrder::default(),
            },
        )
        .unwrap();
        let d = Device::flex();
        assert!(
            matches!(load_net(b"%PDF-1.7 not a model", &d), Err(Error::Model(m)) if m.contains("magic"))
        );
        assert!(
            matches!(load_net(&bytes[..20], &d), Err(Error::Model(m)) if m.contains("truncated"))
        );
        assert!(matches!(
            load_net(&bytes[..bytes.len() - 100], &d),
            Err(Error::Model(_))
        ));
        let mut v2 = bytes.clone();
        v2[8] = 9;
        assert!(matches!(load_net(&v2, &d), Err(Error::Model(m)) if m.contains("version 9")));
    }

    #[test]
    fn headers_from_before_frame_columns_read_four_columns_a_frame() {
        let (cfg, _) = tiny();
        let header = ModelHeader {
            config: cfg.with_frame_columns(2),
            alphabet: alphabet(),
            note: String::new(),
            label_order: LabelOrder::Reading,
        };
        let json = serde_json::to_string(&header).unwrap();
        let now: ModelHeader = serde_json::from_str(&json).unwrap();
        assert_eq!(now.config.frame_columns, 2);
        let mut old: serde_json::Value = serde_json::from_str(&json).unwrap();
        let removed = old["config"]
            .as_object_mut()
            .unwrap()
            .remove("frame_columns");
        assert_eq!(removed, Some(2.into()));
        let old: ModelHeader = serde_json::from_value(old).unwrap();
        assert_eq!(old.config.frame_columns, 4);
    }
}
