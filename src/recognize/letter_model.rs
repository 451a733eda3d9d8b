//! A letter n-gram model of Arabic words, which the beam search uses to weigh the readings it
//! keeps: a reading whose letters make likely words gains over one whose letters do not.
//!
//! The built-in model (`weights/letters.lm`, made by `weights/make_letter_model.py` from the
//! Arabic word frequencies of the `wordfreq` package, CC BY-SA 4.0) scores the letters of one
//! word at a time, from a word boundary to the next: letters are Arabic letters, harakat and
//! tatweel pass unseen, and anything else (space, punctuation, digits, Latin) ends a word.
//! Scoring a reading by such a model beside the network is shallow fusion (Hannun et al. 2014,
//! section 3; Gulcehre et al. 2015).

use std::io::Read;
use std::sync::OnceLock;

use super::charset::{is_haraka, Charset, TATWEEL};
use crate::{Error, Result};

/// The built-in letter model, deflated.
const BUILTIN: &[u8] = include_bytes!("weights/letters.lm");

/// Nats per quantization step of a stored log-probability.
const STEP: f32 = 0.08;

/// The key suffix under which a context's back-off weight is stored.
const BACK_OFF: u64 = 63;

/// The word boundary symbol.
const BOUNDARY: u8 = 0;

/// Longest n-gram any model file may hold (six bits a symbol in a 64-bit key, one slot for
/// the back-off marker).
const MAX_ORDER: usize = 9;

/// An n-gram model over the letters of words (boundary = 0, letters 1..).
#[derive(Debug, Clone)]
pub struct LetterModel {
    order: usize,
    letters: Vec<char>,
    keys: Vec<u64>,
    costs: Vec<u8>,
}

impl LetterModel {
    /// The model shipped in the binary (parsed once).
    pub fn builtin() -> &'static LetterModel {
        static MODEL: OnceLock<LetterModel> = OnceLock::new();
        MODEL.get_or_init(|| {
            LetterModel::from_deflated(BUILTIN).expect("the built-in letter model is well formed")
        })
    }

    /// Parse a model file (zlib-deflated; layout in `weights/make_letter_model.py`).
    pub fn from_deflated(bytes: &[u8]) -> Result<LetterModel> {
        let mut raw = Vec::new();
        flate2::read::ZlibDecoder::new(bytes)
            .read_to_end(&mut raw)
            .map_err(|e| bad(&format!("cannot inflate it ({e})")))?;
        let mut r = Reader { bytes: &raw, at: 0 };
        if r.take(4)? != b"MSLM" {
            return Err(bad("it does not start with MSLM"));
        }
        let version = r.byte()?;
        if version != 1 {
            return Err(bad(&format!("version {version} is not known")));
        }
        let order = r.byte()? as usize;
        if !(1..=MAX_ORDER).contains(&order) {
            return Err(bad(&format!("order {order} is out of range")));
        }
        let count = r.byte()? as usize;
        let text_len = r.byte()? as usize;
        let letters: Vec<char> = std::str::from_utf8(r.take(text_len)?)
            .map_err(|_| bad("its letters are not UTF-8"))?
            .chars()
            .collect();
        if letters.len() != count || count >= BACK_OFF as usize - 1 {
            return Err(bad("its letter count does not match its letters"));
        }
        let entries = u32::from_le_bytes(r.take(4)?.try_into().expect("four bytes")) as usize;
        let mut keys = Vec::with_capacity(entries.min(raw.len()));
        let mut costs = Vec::with_capacity(entries.min(raw.len()));
        let mut key = 0u64;
        for _ in 0..entries {
            let delta = r.leb128()?;
            key = key
                .checked_add(delta)
                .ok_or_else(|| bad("its keys overflow"))?;
            keys.push(key);
            costs.push(r.byte()?);
        }
        if r.at != raw.len() {
            return Err(bad("it has bytes after its last entry"));
        }
        Ok(LetterModel {
            order,
            letters,
            keys,
            costs,
        })
    }

    /// Longest n-gram the model knows.
    pub fn order(&self) -> usize {
        self.order
    }

    /// The model's symbol for a letter (1..), if it is one of its letters.
    pub fn symbol_of(&self, c: char) -> Option<u8> {
        self.letters
            .iter()
            .position(|&l| l == c)
            .map(|i| i as u8 + 1)
    }

    /// `ln P(next | context)`, context oldest first (at most `order - 1` symbols are used), by
    /// backing off to shorter contexts where the n-gram was not kept.
    pub fn log_prob(&self, context: &[u8], next: u8) -> f32 {
        let keep = context.len().min(self.order - 1);
        let mut h = &context[context.len() - keep..];
        let mut back_off = 0.0;
        loop {
            if let Some(cost) = self.cost(&key_of(h, u64::from(next) + 1)) {
                return back_off - cost;
            }
            if h.is_empty() {
                // A letter the model never saw: as unlikely as it can say.
                return back_off - 255.0 * STEP;
            }
            back_off -= self.cost(&key_of(h, BACK_OFF)).unwrap_or(0.0);
            h = &h[1..];
        }
    }

    fn cost(&self, key: &u64) -> Option<f32> {
        self.keys
            .binary_search(key)
            .ok()
            .map(|i| f32::from(self.costs[i]) * STEP)
    }
}

/// The key of `context` followed by `last` (already a key slot value).
fn key_of(context: &[u8], last: u64) -> u64 {
    context
        .iter()
        .fold(0u64, |k, &s| (k << 6) | (u64::from(s) + 1))
        << 6
        | last
}

fn bad(why: &str) -> Error {
    Error::Model(format!("letter model: {why}"))
}

struct Reader<'a> {
    bytes: &'a [u8],
    at: usize,
}

impl<'a> Reader<'a> {
    fn take(&mut self, n: usize) -> Result<&'a [u8]> {
        let end = self.at.checked_add(n).filter(|&e| e <= self.bytes.len());
        let end = end.ok_or_else(|| bad("it ends early"))?;
        let out = &self.bytes[self.at..end];
        self.at = end;
        Ok(out)
    }

    fn byte(&mut self) -> Result<u8> {
        Ok(self.take(1)?[0])
    }

    fn leb128(&mut self) -> Result<u64> {
        let mut out = 0u64;
        for shift in (0..64).step_by(7) {
            let b = self.byte()?;
            out |= u64::from(b & 0x7F) << shift;
            if b & 0x80 == 0 {
                return Ok(out);
            }
        }
        Err(bad("a key is too long"))
    }
}

/// What a recognizer class is to the letter model.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Role {
    /// A letter of a word.
    Letter(u8),
    /// Harakat, tatweel and the blank: the model does not see them.
    Unseen,
    /// Anything else ends a word.
    Boundary,
}

/// The most a letter or a word's end costs, in nats: a name or a word the model never saw pays
/// a bounded price, so the model tips close calls without rewriting what the network read
/// plainly. Chosen with [`ALLOWANCE`] and the weight on validation lines of the training faces
/// (`val4`; half of its lines are random letters, which an unbounded model rewrote into words).
pub const COST_CAP: f32 = 3.0;

/// Nats per letter given back to a reading, so that the model does not favour readings with
/// fewer letters (the insertion bonus of shallow fusion).
pub const ALLOWANCE: f32 = 8.0 / 3.0;

/// The letter model put to a recognizer's classes: a reading scores `ln p_network + weight ·
/// Σ (max(ln p_letter, -COST_CAP) + ALLOWANCE)` over its letters (word ends count without the
/// allowance).
#[derive(Debug, Clone)]
pub struct Speller<'m> {
    model: &'m LetterModel,
    roles: Vec<Role>,
    /// Weight of the letter model beside the network.
    pub weight: f32,
}

/// Where a reading stands in the letter model: the current word's last letters (boundary
/// first) and the weighted score so far.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SpellState {
    context: [u8; MAX_ORDER],
    len: u8,
    /// Weighted letter-model score plus bonuses of the reading so far.
    pub score: f32,
}

impl Default for SpellState {
    fn default() -> Self {
        SpellState {
            context: [BOUNDARY; MAX_ORDER],
            len: 1,
            score: 0.0,
        }
    }
}

impl SpellState {
    fn context(&self) -> &[u8] {
        &self.context[..self.len as usize]
    }

    fn push(&mut self, s: u8, keep: usize) {
        if (self.len as usize) < keep {
            self.len += 1;
        } else {
            self.context.copy_within(1..self.len as usize, 0);
        }
        self.context[self.len as usize - 1] = s;
    }
}

impl<'m> Speller<'m> {
    /// Fit `model` to the classes of `charset`.
    pub fn new(model: &'m LetterModel, charset: &Charset, weight: f32) -> Speller<'m> {
        let roles = (0..charset.classes())
            .map(|class| match charset.char_of(class) {
                None => Role::Unseen,
                Some(c) if is_haraka(c) || c == TATWEEL => Role::Unseen,
                Some(c) => model.symbol_of(c).map_or(Role::Boundary, Role::Letter),
            })
            .collect();
        Speller {
            model,
            roles,
            weight,
        }
    }

    /// The state after reading `class` in state `s`.
    pub fn step(&self, s: &SpellState, class: usize) -> SpellState {
        let mut next = *s;
        match self.roles.get(class).copied().unwrap_or(Role::Boundary) {
            Role::Unseen => {}
            Role::Letter(l) => {
                let lp = self.model.log_prob(s.context(), l).max(-COST_CAP);
                next.score += self.weight * (lp + ALLOWANCE);
                next.push(l, self.model.order().max(2) - 1);
            }
            Role::Boundary => next = self.finish(s),
        }
        next
    }

    /// The state with its word ended (nothing changes between words).
    pub fn finish(&self, s: &SpellState) -> SpellState {
        if s.context() == [BOUNDARY] {
            return *s;
        }
        SpellState {
            score: s.score
                + self.weight * self.model.log_prob(s.context(), BOUNDARY).max(-COST_CAP),
            ..SpellState::default()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn word_cost(m: &LetterModel, word: &str) -> f32 {
        let mut ctx = vec![BOUNDARY];
        let mut cost = 0.0;
        for c in word.chars() {
            let s = m.symbol_of(c).expect("a letter");
            cost -= m.log_prob(&ctx, s);
            ctx.push(s);
        }
        cost - m.log_prob(&ctx, BOUNDARY)
    }

    #[test]
    fn the_built_in_model_knows_the_arabic_letters_and_sums_to_about_one() {
        let m = LetterModel::builtin();
        assert_eq!(m.order(), 6);
        // The recognizer's letters (charset.rs) are the model's.
        let charset = Charset::new();
        for c in ('\u{0621}'..='\u{063A}').chain('\u{0641}'..='\u{064A}') {
            assert!(
                charset.class_of(c).is_some() && m.symbol_of(c).is_some(),
                "{c}"
            );
        }
        // After a context the model has seen, the probabilities of every next symbol add up to
        // one, give or take the quantization and the n-grams left out (common practice for
        // back-off models, no source).
        for ctx in [vec![BOUNDARY], vec![BOUNDARY, 22, 23], vec![23, 32, 32, 31]] {
            let total: f32 = (0..=36u8).map(|s| m.log_prob(&ctx, s).exp()).sum();
            assert!((0.85..1.15).contains(&total), "{ctx:?}: {total}");
        }
    }

    #[test]
    fn common_words_cost_less_than_their_letters_shuffled() {
        // Common Arabic words (from memory: في "in", من "from", على "on", الكتاب "the book",
        // المحكمة "the court") against the same letters in an order no word has.
        let m = LetterModel::builtin();
        for (word, shuffled) in [
            ("من", "نم"),
            ("على", "لىع"),
            ("الكتاب", "باتكال"),
            ("المحكمة", "ةمكحمال"),
        ] {
            let (a, b) = (word_cost(m, word), word_cost(m, shuffled));
            assert!(a + 2.0 < b, "{word} {a} vs {shuffled} {b}");
        }
        // A final nun is far likelier than a final zain after "بي" (بين "between").
        assert!(word_cost(m, "بين") + 3.0 < word_cost(m, "بيز"));
    }

    #[test]
    fn harakat_pass_unseen_and_a_space_ends_the_word() {
        let m = LetterModel::builtin();
        let charset = Charset::new();
        let sp = Speller::new(m, &charset, 1.0);
        let read = |text: &str| {
            let s = text.chars().fold(SpellState::default(), |s, c| {
                sp.step(&s, charset.class_of(c).expect("in the alphabet"))
            });
            sp.finish(&s).score
        };
        let plain = read("من عن");
        assert!((read("مِن عَن") - plain).abs() < 1e-6);
        // Words are scored apart: the line's score is its words' scores added.
        assert!((plain - read("من") - read("عن")).abs() < 1e-4);
        // A word's score, by the definition on `Speller`: two letters and the word's end.
        let (m_, n_) = (m.symbol_of('م').unwrap(), m.symbol_of('ن').unwrap());
        let capped = |lp: f32| lp.max(-COST_CAP);
        let want = capped(m.log_prob(&[BOUNDARY], m_))
            + capped(m.log_prob(&[BOUNDARY, m_], n_))
            + 2.0 * ALLOWANCE
            + capped(m.log_prob(&[BOUNDARY, m_, n_], BOUNDARY));
        assert!((read("من") - want).abs() < 1e-4);
        // Punctuation and digits end words as a space does.
        assert!((read("من،عن") - plain).abs() < 1e-6);
        assert!((read("من 12 عن") - plain).abs() < 1e-6);
    }

    #[test]
    fn damaged_files_are_refused() {
        let raw = {
            let mut d = flate2::read::ZlibDecoder::new(BUILTIN);
            let mut v = Vec::new();
            d.read_to_end(&mut v).unwrap();
            v
        };
        let deflate = |bytes: &[u8]| {
            use std::io::Write;
            let mut e = flate2::write::ZlibEncoder::new(Vec::new(), flate2::Compression::fast());
            e.write_all(bytes).unwrap();
            e.finish().unwrap()
        };
        assert!(LetterModel::from_deflated(b"not deflated").is_err());
        assert!(LetterModel::from_deflated(&deflate(&raw[..raw.len() - 1])).is_err());
        let mut extra = raw.clone();
        extra.push(0);
        assert!(LetterModel::from_deflated(&deflate(&extra)).is_err());
        let mut wrong = raw.clone();
        wrong[0] = b'X';
        assert!(LetterModel::from_deflated(&deflate(&wrong)).is_err());
        assert!(LetterModel::from_deflated(&deflate(&raw)).is_ok());
    }
}
