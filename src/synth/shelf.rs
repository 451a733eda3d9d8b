//! The open font shelf: fonts_open/fonts.toml and the font files it lists, built into the binary.
//!
//! Owns which fonts exist, their style class and role (train or heldout), and the parsed faces.
//! Shaping and drawing with them is [`super::render`]'s job.

use std::sync::OnceLock;

use serde::Deserialize;

use super::shelf_files::FONT_FILES;

/// The manifest, as committed beside the fonts.
pub const MANIFEST_TOML: &str = include_str!("../../fonts_open/fonts.toml");

/// Family drawn for characters the chosen font lacks (Latin letters, brackets in some faces).
pub const FALLBACK_FAMILY: &str = "Amiri";

/// Broad style of a typeface.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum StyleClass {
    /// Naskh, the common book hand of old print.
    Naskh,
    /// Modern sans.
    Sans,
    /// Kufi.
    Kufi,
    /// Display and headline faces.
    Display,
    /// Nastaliq, the hanging hand of Persian and Urdu print.
    Nastaliq,
}

impl StyleClass {
    /// Lower-case name as in fonts.toml.
    pub fn name(self) -> &'static str {
        match self {
            StyleClass::Naskh => "naskh",
            StyleClass::Sans => "sans",
            StyleClass::Kufi => "kufi",
            StyleClass::Display => "display",
            StyleClass::Nastaliq => "nastaliq",
        }
    }
}

/// Whether a font may be used to make training data.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Role {
    /// Used for training data.
    Train,
    /// Never used for training; for honest tests.
    Heldout,
}

impl Role {
    /// Lower-case name as in fonts.toml.
    pub fn name(self) -> &'static str {
        match self {
            Role::Train => "train",
            Role::Heldout => "heldout",
        }
    }
}

/// Which fonts a synthetic run may draw from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum FontSet {
    /// Only `train` fonts.
    #[default]
    Train,
    /// Only `heldout` fonts.
    Heldout,
    /// Every font.
    All,
}

impl FontSet {
    /// The set's name as the `--fonts` option spells it.
    pub fn name(self) -> &'static str {
        match self {
            FontSet::Train => "train",
            FontSet::Heldout => "heldout",
            FontSet::All => "all",
        }
    }

    /// Whether a font of this role belongs to the set.
    pub fn admits(self, role: Role) -> bool {
        match self {
            FontSet::Train => role == Role::Train,
            FontSet::Heldout => role == Role::Heldout,
            FontSet::All => true,
        }
    }
}

/// One line of the manifest.
#[derive(Debug, Clone, Deserialize)]
pub struct FontEntry {
    /// Path under fonts_open/.
    pub file: String,
    /// Family name.
    pub family: String,
    /// Style class.
    pub class: StyleClass,
    /// `regular` or `bold`.
    pub weight: String,
    /// Licence identifier (SPDX).
    pub licence: String,
    /// Package and version the file came from (a Debian package, or an npm package for the later
    /// additions).
    pub source: String,
    /// Train or heldout.
    pub role: Role,
}

#[derive(Deserialize)]
struct Manifest {
    font: Vec<FontEntry>,
}

/// A shelf font ready for shaping.
pub struct ShelfFont {
    /// Its manifest entry.
    pub entry: FontEntry,
    /// The parsed face (rustybuzz wraps ttf-parser).
    pub face: rustybuzz::Face<'static>,
}

impl ShelfFont {
    /// Short name for manifests: file stem, e.g. `Amiri-Bold`.
    pub fn name(&self) -> &str {
        let file = self
            .entry
            .file
            .rsplit('/')
            .next()
            .unwrap_or(&self.entry.file);
        file.rsplit_once('.').map_or(file, |(stem, _)| stem)
    }

    /// Whether the font maps this character to a glyph.
    pub fn covers(&self, c: char) -> bool {
        self.face.glyph_index(c).is_some()
    }
}

/// All shelf fonts, parsed once.
pub struct Shelf {
    /// Fonts in manifest order.
    pub fonts: Vec<ShelfFont>,
    /// Index of the fallback font.
    pub fallback: usize,
}

impl Shelf {
    /// The shelf built into this binary (parsed on first use).
    pub fn get() -> &'static Shelf {
        static SHELF: OnceLock<Shelf> = OnceLock::new();
        SHELF.get_or_init(|| Shelf::load().expect("the built-in font shelf is consistent (tested)"))
    }

    fn load() -> Result<Shelf, String> {
        let manifest: Manifest =
            toml::from_str(MANIFEST_TOML).map_err(|e| format!("fonts.toml: {e}"))?;
        let mut fonts = Vec::new();
        for entry in manifest.font {
            let bytes = FONT_FILES
                .iter()
                .find(|(f, _)| *f == entry.file)
                .map(|(_, b)| *b)
                .ok_or_else(|| format!("{} is in fonts.toml but not built in", entry.file))?;
            let face = rustybuzz::Face::from_slice(bytes, 0)
                .ok_or_else(|| format!("{}: not a font", entry.file))?;
            fonts.push(ShelfFont { entry, face });
        }
        let fallback = fonts
            .iter()
            .position(|f| f.entry.family == FALLBACK_FAMILY && f.entry.weight == "regular")
            .ok_or("fallback font missing")?;
        Ok(Shelf { fonts, fallback })
    }

    /// Indices of the fonts in a set, in manifest order.
    pub fn indices(&self, set: FontSet) -> Vec<usize> {
        (0..self.fonts.len())
            .filter(|&i| set.admits(self.fonts[i].entry.role))
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn manifest_and_built_in_files_agree() {
        let shelf = Shelf::get();
        assert_eq!(shelf.fonts.len(), FONT_FILES.len());
        assert!(shelf.fonts.len() >= 35);
        let mut train: Vec<&str> = shelf
            .fonts
            .iter()
            .filter(|f| f.entry.role == Role::Train)
            .map(|f| f.entry.family.as_str())
            .collect();
        train.dedup();
        assert!(train.len() >= 15, "{} train families", train.len());
        for f in &shelf.fonts {
            assert!(
                f.covers('ب') && f.covers('٣'),
                "{} lacks basic Arabic",
                f.entry.file
            );
            assert_eq!(f.entry.licence, "OFL-1.1");
        }
    }

    #[test]
    fn at_least_three_heldout_families_one_naskh() {
        let shelf = Shelf::get();
        let held: Vec<&FontEntry> = shelf
            .fonts
            .iter()
            .map(|f| &f.entry)
            .filter(|e| e.role == Role::Heldout)
            .collect();
        let mut families: Vec<&str> = held.iter().map(|e| e.family.as_str()).collect();
        families.dedup();
        assert!(families.len() >= 3);
        assert!(held.iter().any(|e| e.class == StyleClass::Naskh));
        // Training and heldout never share a family.
        for f in &shelf.fonts {
            if f.entry.role == Role::Train {
                assert!(!families.contains(&f.entry.family.as_str()));
            }
        }
    }

    #[test]
    fn every_font_joins_dual_joining_letters() {
        // Isolated, initial, medial and final forms must differ in every face, or the shaper is not
        // applying the font's Arabic joining (some faces split letters into skeleton + dots first,
        // so a letter's form is the whole glyph sequence of its cluster).
        use super::super::render::shape_run;
        const T: char = '\u{0640}';
        let shelf = Shelf::get();
        let form = |face: &rustybuzz::Face<'_>, text: &str, at: usize| -> Vec<u32> {
            let byte = text.char_indices().nth(at).unwrap().0 as u32;
            let shaped = shape_run(face, text, 0, true);
            shaped
                .glyph_infos()
                .iter()
                .filter(|g| g.cluster == byte)
                .map(|g| g.glyph_id)
                .collect()
        };
        for f in &shelf.fonts {
            for c in "بجسعفلمهي".chars() {
                let forms = [
                    form(&f.face, &c.to_string(), 0),
                    form(&f.face, &format!("{c}{T}"), 0),
                    form(&f.face, &format!("{T}{c}{T}"), 1),
                    form(&f.face, &format!("{T}{c}"), 1),
                ];
                assert!(
                    forms.iter().all(|g| !g.is_empty() && !g.contains(&0)),
                    "{} {c}: {forms:?}",
                    f.entry.file
                );
                for i in 0..4 {
                    for j in i + 1..4 {
                        assert_ne!(
                            forms[i], forms[j],
                            "{} {c}: forms {i} and {j} alike",
                            f.entry.file
                        );
                    }
                }
            }
        }
    }
}
