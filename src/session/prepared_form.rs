//! The prepared scene kept with a registration, in a small versioned binary form, so a restart (or another
//! replica) reads back what preparing the scene computed instead of computing it again.
//!
//! Owns: `encode` and `decode` of that form, and `PreparedFormError`, which names what was wrong with a
//! stored form that cannot be used. The form holds what `joint_inputs::prepare_input` computes on top of
//! the superpixels kept with the registration: the segment statistics, the adjacency graph (edges in the
//! graph's own order), the coarse level, the unaries and the id of the model that scored them. Decoding
//! builds the same `Scene` and `Unaries` bit for bit, or refuses; a refusal never panics, and the caller
//! then prepares the scene again and says so in the log.
//! Must not: read or write the correction log, choose a unary source, or run a model.
//!
//! # Layout (little-endian)
//!
//! | part | bytes |
//! |---|---|
//! | mark | `SAYSOPRE` (8) |
//! | format | u32, `FORMAT` |
//! | build | string: the package version that wrote it |
//! | registration digest | string: `joint_inputs::input_digest` of the registration it was made from |
//! | superpixels check | u32: CRC-32 (IEEE) of the superpixel ids, u16 each, row-major |
//! | model | u8 flag, then a string: the id of the built-in model that scored the unaries |
//! | size | u32 width, u32 height, u32 segment count |
//! | statistics | one 70-byte record a segment (`write_stats`) |
//! | adjacency | u32 edge count, then per edge u32 first, u32 second, u32 boundary, f32 contrast |
//! | coarse level | u32 region count, then per region u32 member count and the members |
//! | unaries | string: `UnarySource` as JSON; u32 rows, u32 columns, f32 values row-major |
//! | check | u32: CRC-32 (IEEE) of every byte before it |
//!
//! A string is a u32 byte length and UTF-8 bytes. CRC-32 is the IEEE 802.3 polynomial (`flate2::Crc`).

use std::sync::Arc;

use ndarray::Array2;
use petgraph::graph::NodeIndex;

use crate::ids::{RegionId, SegmentId};
use crate::scene::{AdjacencyEdge, AdjacencyGraph, BoundingBox, CoarseLevel, Scene, SegmentStats};
use crate::unaries::{Unaries, UnarySource};
use sayso_core::color::Lab;

use super::corrector::SceneInput;

/// The first bytes of every stored prepared scene.
const MARK: &[u8; 8] = b"SAYSOPRE";
/// The format this build writes and reads. Raise it whenever the layout changes or what it holds is
/// computed differently (segment statistics, adjacency, the coarse level, the unaries).
pub const FORMAT: u32 = 1;
/// The build that writes: a form from another package version is prepared again.
const BUILD: &str = env!("CARGO_PKG_VERSION");
/// Bytes of one segment's statistics record.
const STATS_RECORD: usize = 70;

/// Why a stored prepared scene is not used.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum PreparedFormError {
    #[error("not a prepared scene (it does not start with the format's mark)")]
    NotPrepared,
    #[error("written in format {found}; this build reads format {FORMAT}")]
    Format { found: u32 },
    #[error("written by build {found}; this is build {BUILD}")]
    Build { found: String },
    #[error("damaged: its check does not match its bytes")]
    Damaged,
    #[error("truncated: the file ends inside its {part}")]
    Truncated { part: &'static str },
    #[error("made from another registration (digest {found}, the scene's is {expected})")]
    OtherRegistration { found: String, expected: String },
    #[error("made on other superpixels than the ones kept with the scene")]
    OtherSuperpixels,
    #[error("scored by model {found:?}; the scene is now scored by {expected:?}")]
    OtherModel {
        found: Option<String>,
        expected: Option<String>,
    },
    #[error("inconsistent {part}: {message}")]
    Inconsistent { part: &'static str, message: String },
}

/// What a prepared scene is made of, as `encode` reads it.
pub struct PreparedParts<'a> {
    pub scene: &'a Scene,
    pub unaries: &'a Unaries,
    pub model: Option<&'a str>,
    /// `joint_inputs::input_digest` of the registration.
    pub digest: &'a str,
}

/// What `decode` gives back: the scene on the stored superpixels and its unaries.
pub struct DecodedPrepared {
    pub scene: Scene,
    pub unaries: Unaries,
    pub model: Option<String>,
}

fn crc32(bytes: &[u8]) -> u32 {
    let mut crc = flate2::Crc::new();
    crc.update(bytes);
    crc.sum()
}

fn superpixel_check(labels: impl Iterator<Item = u16>) -> u32 {
    let mut crc = flate2::Crc::new();
    let mut chunk = Vec::with_capacity(2 * 4096);
    let mut labels = labels.peekable();
    while labels.peek().is_some() {
        chunk.clear();
        for label in labels.by_ref().take(4096) {
            chunk.extend_from_slice(&label.to_le_bytes());
        }
        crc.update(&chunk);
    }
    crc.sum()
}

struct Writer(Vec<u8>);

impl Writer {
    fn u32(&mut self, value: u32) {
        self.0.extend_from_slice(&value.to_le_bytes());
    }
    fn f32(&mut self, value: f32) {
        self.0.extend_from_slice(&value.to_le_bytes());
    }
    fn text(&mut self, text: &str) {
        self.u32(text.len() as u32);
        self.0.extend_from_slice(text.as_bytes());
    }
    fn optional(&mut self, value: Option<f32>) {
        self.0.push(u8::from(value.is_some()));
        self.f32(value.unwrap_or(0.0));
    }
}

fn write_stats(writer: &mut Writer, stats: &SegmentStats) {
    writer.u32(stats.id.0);
    writer.u32(stats.area);
    writer.f32(stats.centroid.0);
    writer.f32(stats.centroid.1);
    for value in [stats.bbox.x0, stats.bbox.y0, stats.bbox.x1, stats.bbox.y1] {
        writer.u32(value);
    }
    for lab in [stats.mean_lab, stats.std_lab] {
        writer.f32(lab.l);
        writer.f32(lab.a);
        writer.f32(lab.b);
    }
    writer.optional(stats.mean_depth_mm);
    writer.optional(stats.depth_std_mm);
    writer.u32(stats.depth_pixels);
}

/// The stored form of a prepared scene; `None` past `u32` sizes or 65,536 segments (the superpixels
/// kept with a registration hold at most that many).
pub fn encode(parts: &PreparedParts<'_>) -> Option<Vec<u8>> {
    let scene = parts.scene;
    let segment_count = scene.segments.segment_count;
    if segment_count > u32::from(u16::MAX) + 1 {
        return None;
    }
    let small = |count: usize| u32::try_from(count).ok();
    let log_probs = &parts.unaries.log_probs;
    let mut writer = Writer(Vec::with_capacity(
        64 + scene.stats.len() * STATS_RECORD
            + scene.adjacency.edge_count() * 16
            + segment_count as usize * 8
            + log_probs.len() * 4,
    ));
    writer.0.extend_from_slice(MARK);
    writer.u32(FORMAT);
    writer.text(BUILD);
    writer.text(parts.digest);
    writer.u32(superpixel_check(
        scene.segments.labels.iter().map(|&label| label as u16),
    ));
    writer.0.push(u8::from(parts.model.is_some()));
    writer.text(parts.model.unwrap_or(""));
    writer.u32(scene.segments.width);
    writer.u32(scene.segments.height);
    writer.u32(segment_count);
    if scene.stats.len() != segment_count as usize {
        return None;
    }
    for stats in scene.stats.iter() {
        write_stats(&mut writer, stats);
    }
    writer.u32(small(scene.adjacency.edge_count())?);
    for edge in scene.adjacency.raw_edges() {
        writer.u32(small(edge.source().index())?);
        writer.u32(small(edge.target().index())?);
        writer.u32(edge.weight.boundary_length);
        writer.f32(edge.weight.colour_contrast);
    }
    writer.u32(small(scene.coarse.members.len())?);
    for members in &scene.coarse.members {
        writer.u32(small(members.len())?);
        for member in members {
            writer.u32(member.0);
        }
    }
    let source = serde_json::to_string(&parts.unaries.source).ok()?;
    writer.text(&source);
    writer.u32(small(log_probs.nrows())?);
    writer.u32(small(log_probs.ncols())?);
    for &value in log_probs.iter() {
        writer.f32(value);
    }
    let check = crc32(&writer.0);
    writer.u32(check);
    Some(writer.0)
}

struct Reader<'a> {
    bytes: &'a [u8],
    at: usize,
}

impl<'a> Reader<'a> {
    fn take(&mut self, count: usize, part: &'static str) -> Result<&'a [u8], PreparedFormError> {
        let end = self
            .at
            .checked_add(count)
            .filter(|&end| end <= self.bytes.len())
            .ok_or(PreparedFormError::Truncated { part })?;
        let taken = &self.bytes[self.at..end];
        self.at = end;
        Ok(taken)
    }
    fn u32(&mut self, part: &'static str) -> Result<u32, PreparedFormError> {
        let bytes = self.take(4, part)?;
        Ok(u32::from_le_bytes([bytes[0], bytes[1], bytes[2], bytes[3]]))
    }
    fn f32(&mut self, part: &'static str) -> Result<f32, PreparedFormError> {
        self.u32(part).map(f32::from_bits)
    }
    fn byte(&mut self, part: &'static str) -> Result<u8, PreparedFormError> {
        Ok(self.take(1, part)?[0])
    }
    fn text(&mut self, part: &'static str) -> Result<&'a str, PreparedFormError> {
        let length = self.u32(part)? as usize;
        std::str::from_utf8(self.take(length, part)?).map_err(|_| inconsistent(part, "not UTF-8"))
    }
    fn optional(&mut self, part: &'static str) -> Result<Option<f32>, PreparedFormError> {
        let present = self.byte(part)?;
        let value = self.f32(part)?;
        match present {
            0 => Ok(None),
            1 => Ok(Some(value)),
            _ => Err(inconsistent(part, "a flag is neither 0 nor 1")),
        }
    }
    /// A count of items of `item_bytes` each, refused when the rest of the file cannot hold them (so a
    /// damaged count never reserves memory).
    fn count(&mut self, item_bytes: usize, part: &'static str) -> Result<usize, PreparedFormError> {
        let count = self.u32(part)? as usize;
        if count.saturating_mul(item_bytes) > self.bytes.len() - self.at {
            return Err(PreparedFormError::Truncated { part });
        }
        Ok(count)
    }
}

fn inconsistent(part: &'static str, message: impl Into<String>) -> PreparedFormError {
    PreparedFormError::Inconsistent {
        part,
        message: message.into(),
    }
}

fn read_stats(reader: &mut Reader<'_>, index: u32) -> Result<SegmentStats, PreparedFormError> {
    const PART: &str = "segment statistics";
    let id = reader.u32(PART)?;
    if id != index {
        return Err(inconsistent(
            PART,
            format!("record {index} names segment {id}"),
        ));
    }
    let area = reader.u32(PART)?;
    let centroid = (reader.f32(PART)?, reader.f32(PART)?);
    let bbox = BoundingBox {
        x0: reader.u32(PART)?,
        y0: reader.u32(PART)?,
        x1: reader.u32(PART)?,
        y1: reader.u32(PART)?,
    };
    let mut lab = || -> Result<Lab, PreparedFormError> {
        Ok(Lab {
            l: reader.f32(PART)?,
            a: reader.f32(PART)?,
            b: reader.f32(PART)?,
        })
    };
    let (mean_lab, std_lab) = (lab()?, lab()?);
    Ok(SegmentStats {
        id: SegmentId(id),
        area,
        centroid,
        bbox,
        mean_lab,
        std_lab,
        mean_depth_mm: reader.optional(PART)?,
        depth_std_mm: reader.optional(PART)?,
        depth_pixels: reader.u32(PART)?,
    })
}

/// The prepared scene a stored form holds, for `input` (whose registration digest is `digest`) on the
/// superpixels kept with it; `expected_model` gives, for the scene decoded, the id of the built-in model
/// that would score it now (`None` when its unaries come with the registration). Refused, never
/// panicking, when the form is damaged, truncated, from another format or build, or made for another
/// registration, other superpixels or another model.
pub fn decode(
    bytes: &[u8],
    input: &SceneInput,
    digest: &str,
    expected_model: impl FnOnce(&Scene) -> Option<String>,
) -> Result<DecodedPrepared, PreparedFormError> {
    if bytes.len() < MARK.len() || &bytes[..MARK.len()] != MARK {
        return Err(PreparedFormError::NotPrepared);
    }
    let mut reader = Reader {
        bytes,
        at: MARK.len(),
    };
    let format = reader.u32("format")?;
    if format != FORMAT {
        return Err(PreparedFormError::Format { found: format });
    }
    if bytes.len() < reader.at + 4 {
        return Err(PreparedFormError::Truncated { part: "check" });
    }
    let (body, check) = bytes.split_at(bytes.len() - 4);
    if crc32(body) != u32::from_le_bytes([check[0], check[1], check[2], check[3]]) {
        return Err(PreparedFormError::Damaged);
    }
    let mut reader = Reader {
        bytes: body,
        at: reader.at,
    };
    let build = reader.text("build")?;
    if build != BUILD {
        return Err(PreparedFormError::Build {
            found: build.to_string(),
        });
    }
    let found = reader.text("registration digest")?;
    if found != digest {
        return Err(PreparedFormError::OtherRegistration {
            found: found.to_string(),
            expected: digest.to_string(),
        });
    }
    let superpixels_check = reader.u32("superpixels check")?;
    let has_model = reader.byte("model")?;
    let model = reader.text("model")?;
    let model = match has_model {
        0 => None,
        1 => Some(model.to_string()),
        _ => return Err(inconsistent("model", "its flag is neither 0 nor 1")),
    };
    let (width, height) = (reader.u32("size")?, reader.u32("size")?);
    let segment_count = reader.u32("size")?;
    let Some(stored) = input.superpixels.as_ref() else {
        return Err(PreparedFormError::OtherSuperpixels);
    };
    let pixels = width as usize * height as usize;
    let fits = (width, height) == (input.image.width, input.image.height)
        && (stored.width, stored.height) == (width, height)
        && stored.values.len() == pixels
        && input.image.pixels.len() == pixels;
    if !fits || superpixel_check(stored.values.iter().copied()) != superpixels_check {
        return Err(PreparedFormError::OtherSuperpixels);
    }
    if let Some(depth) = &input.depth {
        if (depth.width, depth.height) != (width, height) || depth.millimetres.len() != pixels {
            return Err(inconsistent("size", "the depth map is another size"));
        }
    }
    if stored
        .values
        .iter()
        .any(|&value| u32::from(value) >= segment_count)
    {
        return Err(PreparedFormError::OtherSuperpixels);
    }
    let segments = super::joint_inputs::segment_map_of(stored, segment_count);
    if (segment_count as usize).saturating_mul(STATS_RECORD) > body.len() - reader.at {
        return Err(PreparedFormError::Truncated {
            part: "segment statistics",
        });
    }
    let mut stats = Vec::with_capacity(segment_count as usize);
    for index in 0..segment_count {
        stats.push(read_stats(&mut reader, index)?);
    }
    let edge_count = reader.count(16, "adjacency")?;
    let mut adjacency = AdjacencyGraph::with_capacity(segment_count as usize, edge_count);
    for index in 0..segment_count {
        adjacency.add_node(SegmentId(index));
    }
    for _ in 0..edge_count {
        let (first, second) = (reader.u32("adjacency")?, reader.u32("adjacency")?);
        if first >= segment_count || second >= segment_count || first == second {
            return Err(inconsistent(
                "adjacency",
                format!("edge {first}-{second} of {segment_count} segments"),
            ));
        }
        let edge = AdjacencyEdge {
            boundary_length: reader.u32("adjacency")?,
            colour_contrast: reader.f32("adjacency")?,
        };
        adjacency.add_edge(
            NodeIndex::new(first as usize),
            NodeIndex::new(second as usize),
            edge,
        );
    }
    let region_count = reader.count(4, "coarse level")?;
    let mut region_of = vec![RegionId(u32::MAX); segment_count as usize];
    let mut members = Vec::with_capacity(region_count);
    for region in 0..region_count {
        let member_count = reader.count(4, "coarse level")?;
        let mut listed = Vec::with_capacity(member_count);
        for _ in 0..member_count {
            let member = reader.u32("coarse level")?;
            let Some(slot) = region_of.get_mut(member as usize) else {
                return Err(inconsistent("coarse level", format!("segment {member}")));
            };
            if slot.0 != u32::MAX {
                return Err(inconsistent(
                    "coarse level",
                    format!("segment {member} in two regions"),
                ));
            }
            *slot = RegionId(region as u32);
            listed.push(SegmentId(member));
        }
        members.push(listed);
    }
    if region_of.iter().any(|region| region.0 == u32::MAX) {
        return Err(inconsistent("coarse level", "a segment in no region"));
    }
    let source: UnarySource = serde_json::from_str(reader.text("unaries")?)
        .map_err(|error| inconsistent("unaries", error.to_string()))?;
    let (rows, columns) = (reader.u32("unaries")?, reader.u32("unaries")?);
    if rows != segment_count {
        return Err(inconsistent(
            "unaries",
            format!("{rows} rows for {segment_count} segments"),
        ));
    }
    let values_bytes = reader.take(
        (rows as usize)
            .checked_mul(columns as usize)
            .and_then(|count| count.checked_mul(4))
            .ok_or(PreparedFormError::Truncated { part: "unaries" })?,
        "unaries",
    )?;
    let values: Vec<f32> = values_bytes
        .chunks_exact(4)
        .map(|b| f32::from_le_bytes([b[0], b[1], b[2], b[3]]))
        .collect();
    let log_probs = Array2::from_shape_vec((rows as usize, columns as usize), values)
        .map_err(|error| inconsistent("unaries", error.to_string()))?;
    if reader.at != body.len() {
        return Err(inconsistent(
            "end",
            format!("{} bytes after the unaries", body.len() - reader.at),
        ));
    }
    let scene = Scene {
        name: input.name.clone(),
        image: input.image.clone(),
        depth: input.depth.clone(),
        segments: Arc::new(segments),
        stats: Arc::new(stats),
        adjacency: Arc::new(adjacency),
        coarse: Arc::new(CoarseLevel { region_of, members }),
        room: input.room,
    };
    let expected = expected_model(&scene);
    if expected != model {
        return Err(PreparedFormError::OtherModel {
            found: model,
            expected,
        });
    }
    Ok(DecodedPrepared {
        scene,
        unaries: Unaries { log_probs, source },
        model,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::raster::{IndexImage, RgbImage};

    /// A 96x72 picture of four coloured blocks with a gradient, scored by a label map of two classes.
    fn label_map_input(width: u32, height: u32) -> SceneInput {
        let taxonomy = crate::taxonomy::Taxonomy::embedded();
        let wall = taxonomy.class_by_name("wall").unwrap().id.0;
        let floor = taxonomy.class_by_name("floor").unwrap().id.0;
        let mut image = RgbImage::filled(width, height, [0, 0, 0]);
        let mut labels = Vec::new();
        for y in 0..height {
            for x in 0..width {
                let block = (x * 2 / width + 2 * (y * 2 / height)) as u8;
                image.set(x, y, [block * 60, (x * 3) as u8, 200 - (y * 2) as u8]);
                labels.push(if y * 2 < height { wall } else { floor });
            }
        }
        SceneInput {
            name: "juniper-lane-pantry".into(),
            image: Arc::new(image),
            depth: None,
            scores_npy: None,
            label_map: Some(IndexImage {
                width,
                height,
                values: labels,
            }),
            detections: Vec::new(),
            room: None,
            classes: super::super::corrector::PerceptionClasses::default(),
            superpixels: None,
            prepared: None,
        }
    }

    /// A registration scored by its own label map, prepared the way a registration is, with its
    /// superpixels kept; and the prepared scene.
    fn prepared() -> (SceneInput, super::super::joint_inputs::PreparedInput) {
        let mut input = label_map_input(96, 72);
        let taxonomy = crate::taxonomy::Taxonomy::embedded();
        let classifier =
            crate::pipeline::load_classifier(&crate::pipeline::shipped_model_path(), &taxonomy)
                .unwrap();
        let digest = super::super::joint_inputs::input_digest(&input);
        let prepared =
            super::super::joint_inputs::prepare_input(&input, &digest, &taxonomy, &classifier)
                .unwrap();
        input.superpixels = super::super::joint_inputs::superpixel_image(&prepared.scene.segments);
        (input, prepared)
    }

    fn encoded(prepared: &super::super::joint_inputs::PreparedInput) -> Vec<u8> {
        encode(&PreparedParts {
            scene: &prepared.scene,
            unaries: &prepared.unaries,
            model: prepared.model.as_deref(),
            digest: &prepared.digest,
        })
        .expect("a small scene encodes")
    }

    #[test]
    fn a_stored_prepared_scene_reads_back_bit_for_bit() {
        let (input, prepared) = prepared();
        let bytes = encoded(&prepared);
        let decoded = decode(&bytes, &input, &prepared.digest, |_| None).expect("reads back");
        let (scene, fresh) = (&decoded.scene, &prepared.scene);
        assert_eq!(scene.segments, fresh.segments);
        assert_eq!(scene.stats, fresh.stats);
        assert_eq!(scene.coarse, fresh.coarse);
        assert_eq!(scene.adjacency.node_count(), fresh.adjacency.node_count());
        let edges = |graph: &AdjacencyGraph| -> Vec<(usize, usize, u32, u32)> {
            graph
                .raw_edges()
                .iter()
                .map(|edge| {
                    (
                        edge.source().index(),
                        edge.target().index(),
                        edge.weight.boundary_length,
                        edge.weight.colour_contrast.to_bits(),
                    )
                })
                .collect()
        };
        assert_eq!(edges(&scene.adjacency), edges(&fresh.adjacency));
        // Neighbour lists are walked in the same order (the solver's edge order comes from them).
        for node in scene.adjacency.node_indices() {
            let read: Vec<_> = scene.adjacency.neighbors(node).collect();
            let cut: Vec<_> = fresh.adjacency.neighbors(node).collect();
            assert_eq!(read, cut);
        }
        let bits = |unaries: &Unaries| -> Vec<u32> {
            unaries
                .log_probs
                .iter()
                .map(|value| value.to_bits())
                .collect()
        };
        assert_eq!(
            decoded.unaries.log_probs.dim(),
            prepared.unaries.log_probs.dim()
        );
        assert_eq!(bits(&decoded.unaries), bits(&prepared.unaries));
        assert_eq!(decoded.unaries.source, prepared.unaries.source);
        assert_eq!(decoded.model, None);
    }

    #[test]
    fn every_truncation_and_every_flipped_byte_is_refused_with_a_reason() {
        let (input, prepared) = prepared();
        let bytes = encoded(&prepared);
        let read = |bytes: &[u8]| decode(bytes, &input, &prepared.digest, |_| None).err();
        for length in 0..bytes.len() {
            let error = read(&bytes[..length]).expect("a truncated form is refused");
            assert!(
                matches!(
                    error,
                    PreparedFormError::NotPrepared
                        | PreparedFormError::Truncated { .. }
                        | PreparedFormError::Damaged
                ),
                "cut at {length}: {error}"
            );
        }
        for index in (0..bytes.len()).step_by(7).chain([bytes.len() - 1]) {
            let mut flipped = bytes.clone();
            flipped[index] ^= 0x10;
            let error = read(&flipped).expect("a damaged form is refused");
            assert!(!error.to_string().is_empty());
        }
        // Bytes after the unaries, under a check written again over them, are refused by the reading.
        let mut longer = bytes[..bytes.len() - 4].to_vec();
        longer.push(0);
        let check = crc32(&longer).to_le_bytes();
        longer.extend_from_slice(&check);
        assert!(
            matches!(
                read(&longer),
                Some(PreparedFormError::Inconsistent { part: "end", .. })
            ),
            "{:?}",
            read(&longer)
        );
    }

    #[test]
    fn a_form_for_another_registration_format_superpixels_or_model_is_refused() {
        let (input, prepared) = prepared();
        let bytes = encoded(&prepared);
        let other = "0".repeat(64);
        assert!(matches!(
            decode(&bytes, &input, &other, |_| None),
            Err(PreparedFormError::OtherRegistration { .. })
        ));
        assert!(matches!(
            decode(&bytes, &input, &prepared.digest, |_| Some(
                "a1b2c3d4e5f6".into()
            )),
            Err(PreparedFormError::OtherModel { .. })
        ));
        let mut older = bytes.clone();
        older[8..12].copy_from_slice(&(FORMAT + 1).to_le_bytes());
        assert_eq!(
            decode(&older, &input, &prepared.digest, |_| None).err(),
            Some(PreparedFormError::Format { found: FORMAT + 1 })
        );
        // Superpixels that differ in one pixel (two segments swapped there) are not the ones it was made on.
        let mut moved = input.clone();
        let superpixels: &mut IndexImage = moved.superpixels.as_mut().unwrap();
        let first = superpixels.values[0];
        let other_segment = superpixels
            .values
            .iter()
            .copied()
            .find(|&v| v != first)
            .unwrap();
        superpixels.values[0] = other_segment;
        assert_eq!(
            decode(&bytes, &moved, &prepared.digest, |_| None).err(),
            Some(PreparedFormError::OtherSuperpixels)
        );
        let mut none = input.clone();
        none.superpixels = None;
        assert_eq!(
            decode(&bytes, &none, &prepared.digest, |_| None).err(),
            Some(PreparedFormError::OtherSuperpixels)
        );
        let mut smaller = input.clone();
        smaller.image = Arc::new(RgbImage::filled(95, 72, [0, 0, 0]));
        assert_eq!(
            decode(&bytes, &smaller, &prepared.digest, |_| None).err(),
            Some(PreparedFormError::OtherSuperpixels)
        );
    }

    /// A form that cannot be used is only a lost shortcut: `prepare_input` prepares the scene again and
    /// gives the same scene as reading a good form.
    #[test]
    fn a_damaged_form_prepares_the_scene_again() {
        let (mut input, prepared) = prepared();
        let bytes = encoded(&prepared);
        let taxonomy = crate::taxonomy::Taxonomy::embedded();
        let classifier =
            crate::pipeline::load_classifier(&crate::pipeline::shipped_model_path(), &taxonomy)
                .unwrap();
        let mut damaged = bytes.clone();
        let middle = damaged.len() / 2;
        damaged[middle] ^= 0x01;
        for form in [bytes, damaged, b"SAYSOPRE".to_vec(), Vec::new()] {
            input.prepared = Some(Arc::new(form));
            let again = super::super::joint_inputs::prepare_input(
                &input,
                &prepared.digest,
                &taxonomy,
                &classifier,
            )
            .expect("prepares");
            assert_eq!(again.scene.stats, prepared.scene.stats);
            assert_eq!(again.scene.coarse, prepared.scene.coarse);
            assert_eq!(again.unaries, prepared.unaries);
        }
    }
}
