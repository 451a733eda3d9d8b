//! PDF/A-2b (ISO 19005-2, conformance level B) pieces shared by both PDF writers: the document
//! metadata kept identical in the Info dictionary and the XMP packet, the XMP packet itself, the
//! sRGB output intent, and PDF/XMP dates.
//!
//! The writers place the objects (`pdf_fresh` with pdf-writer, `pdf_overlay` with lopdf); this
//! module only builds their contents.
//!
//! How conformance is checked: no PDF/A validator is installable from the registries this
//! project uses (crates.io, PyPI, npm, Debian), so `tests/integration/archival.rs` checks each
//! rule we implement with outside tools, on both writers: file structure (`qpdf --check`),
//! header and binary mark (§6.1.2), file identifier and no encryption (§6.1.3), output intent
//! `GTS_PDFA1` with an RGB ICC profile, N = 3 (§6.2.3), unfiltered XMP that xmllint parses, with
//! `pdfaid:part` 2 and `pdfaid:conformance` B (§6.6.2.1, §6.6.4), Info entries equal to their XMP
//! counterparts (§6.6.2.3.1), no soft masks or constant alpha (§6.2.10), embedded font programs
//! (§6.2.11.4.1). Not checked: the full rule set of a validator; and on the overlay path the
//! input's own content (its fonts, annotations, transparency, actions) is kept as it is, so the
//! copy is PDF/A-2b only where the input's content already follows those rules. Fresh PDFs made
//! from CMYK JPEG pages use DeviceCMYK, which an sRGB output intent does not cover (§6.2.4.3).

use std::fmt::Write as _;
use std::time::{SystemTime, UNIX_EPOCH};

use super::alto::escape_attr;

/// The output intent's ICC profile: sRGB, ICC version 2, made by `make_srgb_icc.py` from the
/// LittleCMS built-in sRGB profile ("No copyright, use freely").
pub const SRGB_ICC: &[u8] = include_bytes!("srgb.icc");
/// `OutputConditionIdentifier` and `Info` of the output intent: the ICC registry name of sRGB.
pub const SRGB_CONDITION: &str = "sRGB IEC61966-2.1";
/// `RegistryName` of the output intent (ISO 32000-1 §14.11.5, Table 365).
pub const ICC_REGISTRY: &str = "http://www.color.org";

/// A calendar date and time with its offset from UTC, as PDF and XMP write it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PdfDate {
    /// Year, e.g. 2026.
    pub year: i32,
    /// Month 1–12.
    pub month: u32,
    /// Day 1–31.
    pub day: u32,
    /// Hour 0–23.
    pub hour: u32,
    /// Minute 0–59.
    pub minute: u32,
    /// Second 0–59.
    pub second: u32,
    /// Offset from UTC in minutes (east positive).
    pub offset_min: i32,
}

impl PdfDate {
    /// The date of a Unix time in UTC.
    pub fn from_unix(secs: i64) -> PdfDate {
        let days = secs.div_euclid(86_400);
        let rem = secs.rem_euclid(86_400) as u32;
        // Days → civil date: H. Hinnant, "chrono-Compatible Low-Level Date Algorithms",
        // `civil_from_days`.
        let z = days + 719_468;
        let era = z.div_euclid(146_097);
        let doe = z.rem_euclid(146_097);
        let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
        let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
        let mp = (5 * doy + 2) / 153;
        let day = (doy - (153 * mp + 2) / 5 + 1) as u32;
        let month = (if mp < 10 { mp + 3 } else { mp - 9 }) as u32;
        let year = (yoe + era * 400 + i64::from(month <= 2)) as i32;
        PdfDate {
            year,
            month,
            day,
            hour: rem / 3600,
            minute: rem / 60 % 60,
            second: rem % 60,
            offset_min: 0,
        }
    }

    /// Now, in UTC; or the time in `SOURCE_DATE_EPOCH` when set, so runs can be reproduced
    /// (reproducible-builds.org specification of that variable).
    pub fn now() -> PdfDate {
        let fixed = std::env::var("SOURCE_DATE_EPOCH")
            .ok()
            .and_then(|s| s.trim().parse::<i64>().ok());
        let secs = fixed.unwrap_or_else(|| {
            SystemTime::now()
                .duration_since(UNIX_EPOCH)
                .map_or(0, |d| d.as_secs() as i64)
        });
        PdfDate::from_unix(secs)
    }

    /// `D:YYYYMMDDHHmmSS+HH'mm'` (ISO 32000-1 §7.9.4).
    pub fn to_pdf(&self) -> String {
        let (sign, off) = self.offset();
        format!(
            "D:{:04}{:02}{:02}{:02}{:02}{:02}{sign}{:02}'{:02}'",
            self.year,
            self.month,
            self.day,
            self.hour,
            self.minute,
            self.second,
            off / 60,
            off % 60
        )
    }

    /// `YYYY-MM-DDTHH:mm:SS+HH:mm` (XMP, ISO 16684-1 §8.2.1.2, after ISO 8601).
    pub fn to_xmp(&self) -> String {
        let (sign, off) = self.offset();
        format!(
            "{:04}-{:02}-{:02}T{:02}:{:02}:{:02}{sign}{:02}:{:02}",
            self.year,
            self.month,
            self.day,
            self.hour,
            self.minute,
            self.second,
            off / 60,
            off % 60
        )
    }

    fn offset(&self) -> (char, i32) {
        let sign = if self.offset_min < 0 { '-' } else { '+' };
        (sign, self.offset_min.abs())
    }

    /// Read a PDF date (`D:YYYY[MM[DD[HH[mm[SS[O[HH['mm']]]]]]]]`, ISO 32000-1 §7.9.4); missing
    /// parts take their defaults (month and day 1, time 0, offset UTC).
    pub fn parse_pdf(s: &str) -> Option<PdfDate> {
        let s = s.trim().strip_prefix("D:").unwrap_or(s.trim());
        let digits: String = s.chars().take_while(char::is_ascii_digit).collect();
        if digits.len() < 4 {
            return None;
        }
        let num = |a: usize, b: usize, dflt: u32| -> u32 {
            digits
                .get(a..b)
                .and_then(|v| v.parse().ok())
                .unwrap_or(dflt)
        };
        let rest = &s[digits.len()..];
        let offset_min = match rest.chars().next() {
            Some(c @ ('+' | '-')) => {
                let d: String = rest[1..].chars().filter(char::is_ascii_digit).collect();
                let h: i32 = d.get(0..2).and_then(|v| v.parse().ok()).unwrap_or(0);
                let m: i32 = d.get(2..4).and_then(|v| v.parse().ok()).unwrap_or(0);
                if c == '-' {
                    -(h * 60 + m)
                } else {
                    h * 60 + m
                }
            }
            _ => 0,
        };
        let date = PdfDate {
            year: num(0, 4, 0) as i32,
            month: num(4, 6, 1),
            day: num(6, 8, 1),
            hour: num(8, 10, 0),
            minute: num(10, 12, 0),
            second: num(12, 14, 0),
            offset_min,
        };
        let ok = (1..=12).contains(&date.month)
            && (1..=31).contains(&date.day)
            && date.hour < 24
            && date.minute < 60
            && date.second < 60
            && offset_min.abs() < 24 * 60;
        ok.then_some(date)
    }
}

/// Document metadata written the same way into the Info dictionary and the XMP packet, as
/// PDF/A requires (ISO 19005-2 §6.6.2.3.1; the Info ↔ XMP pairs of ISO 32000-1 §14.3.3 and
/// ISO 16684-1 are listed beside each field).
#[derive(Debug, Clone, PartialEq)]
pub struct ArchivalInfo {
    /// `/Title` ↔ `dc:title`.
    pub title: Option<String>,
    /// `/Author` ↔ `dc:creator` (one entry).
    pub author: Option<String>,
    /// `/Subject` ↔ `dc:description`: the machine-text notice unless the document had a subject.
    pub subject: Option<String>,
    /// `/Keywords` ↔ `pdf:Keywords`.
    pub keywords: Option<String>,
    /// `/Creator` ↔ `xmp:CreatorTool`.
    pub creator: Option<String>,
    /// `/Producer` ↔ `pdf:Producer`.
    pub producer: String,
    /// `/CreationDate` ↔ `xmp:CreateDate`.
    pub created: PdfDate,
    /// `/ModDate` ↔ `xmp:ModifyDate` (and `xmp:MetadataDate`).
    pub modified: PdfDate,
    /// The file identifier (first `/ID` string), also used as `xmpMM:DocumentID`.
    pub id: [u8; 16],
}

impl ArchivalInfo {
    /// The Info dictionary entries as (key, text) pairs, text not yet encoded.
    pub fn info_entries(&self) -> Vec<(&'static str, String)> {
        let mut v = Vec::new();
        let mut opt = |k: &'static str, s: &Option<String>| {
            if let Some(s) = s {
                v.push((k, s.clone()));
            }
        };
        opt("Title", &self.title);
        opt("Author", &self.author);
        opt("Subject", &self.subject);
        opt("Keywords", &self.keywords);
        opt("Creator", &self.creator);
        v.push(("Producer", self.producer.clone()));
        v.push(("CreationDate", self.created.to_pdf()));
        v.push(("ModDate", self.modified.to_pdf()));
        v
    }

    /// The XMP packet (ISO 16684-1) with the PDF/A identification `pdfaid:part` 2,
    /// `pdfaid:conformance` B (ISO 19005-2 §6.6.4), unfiltered UTF-8 as §6.6.2.1 asks.
    pub fn xmp(&self) -> Vec<u8> {
        let hex: String = self.id.iter().map(|b| format!("{b:02x}")).collect();
        let uuid = format!(
            "uuid:{}-{}-{}-{}-{}",
            &hex[0..8],
            &hex[8..12],
            &hex[12..16],
            &hex[16..20],
            &hex[20..32]
        );
        let mut x =
            String::from("<?xpacket begin=\"\u{FEFF}\" id=\"W5M0MpCehiHzreSzNTczkc9d\"?>\n");
        x.push_str("<x:xmpmeta xmlns:x=\"adobe:ns:meta/\">\n <rdf:RDF xmlns:rdf=\"http://www.w3.org/1999/02/22-rdf-syntax-ns#\">\n");
        x.push_str("  <rdf:Description rdf:about=\"\"\n    xmlns:pdfaid=\"http://www.aiim.org/pdfa/ns/id/\"\n    xmlns:dc=\"http://purl.org/dc/elements/1.1/\"\n    xmlns:xmp=\"http://ns.adobe.com/xap/1.0/\"\n    xmlns:pdf=\"http://ns.adobe.com/pdf/1.3/\"\n    xmlns:xmpMM=\"http://ns.adobe.com/xap/1.0/mm/\">\n");
        x.push_str(
            "   <pdfaid:part>2</pdfaid:part>\n   <pdfaid:conformance>B</pdfaid:conformance>\n",
        );
        x.push_str("   <dc:format>application/pdf</dc:format>\n");
        let alt = |x: &mut String, name: &str, v: &Option<String>| {
            if let Some(v) = v {
                let _ = writeln!(
                    x,
                    "   <{name}><rdf:Alt><rdf:li xml:lang=\"x-default\">{}</rdf:li></rdf:Alt></{name}>",
                    escape_attr(v)
                );
            }
        };
        alt(&mut x, "dc:title", &self.title);
        if let Some(a) = &self.author {
            let _ = writeln!(
                x,
                "   <dc:creator><rdf:Seq><rdf:li>{}</rdf:li></rdf:Seq></dc:creator>",
                escape_attr(a)
            );
        }
        alt(&mut x, "dc:description", &self.subject);
        let simple = |x: &mut String, name: &str, v: Option<&str>| {
            if let Some(v) = v {
                let _ = writeln!(x, "   <{name}>{}</{name}>", escape_attr(v));
            }
        };
        simple(&mut x, "pdf:Keywords", self.keywords.as_deref());
        simple(&mut x, "pdf:Producer", Some(self.producer.as_str()));
        simple(&mut x, "xmp:CreatorTool", self.creator.as_deref());
        simple(
            &mut x,
            "xmp:CreateDate",
            Some(self.created.to_xmp().as_str()),
        );
        simple(
            &mut x,
            "xmp:ModifyDate",
            Some(self.modified.to_xmp().as_str()),
        );
        simple(
            &mut x,
            "xmp:MetadataDate",
            Some(self.modified.to_xmp().as_str()),
        );
        simple(&mut x, "xmpMM:DocumentID", Some(uuid.as_str()));
        simple(&mut x, "xmpMM:InstanceID", Some(uuid.as_str()));
        x.push_str("  </rdf:Description>\n </rdf:RDF>\n</x:xmpmeta>\n");
        // Room for editors to change the packet in place (ISO 16684-1 §7.3.2 padding).
        for _ in 0..20 {
            x.push_str(&" ".repeat(99));
            x.push('\n');
        }
        x.push_str("<?xpacket end=\"w\"?>");
        x.into_bytes()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unix_time_to_civil_date() {
        // 2000-03-01T00:00:00Z is 951 868 800 s after the Unix epoch (POSIX time; also
        // `date -u -d @951868800`, GNU coreutils).
        let d = PdfDate::from_unix(951_868_800);
        assert_eq!((d.year, d.month, d.day, d.hour), (2000, 3, 1, 0));
        // 1 234 567 890 s = 2009-02-13T23:31:30Z (widely quoted; `date -u -d @1234567890`).
        let d = PdfDate::from_unix(1_234_567_890);
        assert_eq!(d.to_xmp(), "2009-02-13T23:31:30+00:00");
        assert_eq!(d.to_pdf(), "D:20090213233130+00'00'");
    }

    #[test]
    fn pdf_dates_parse_with_defaults_and_offsets() {
        // Example of ISO 32000-1 §7.9.4: (D:199812231952-08'00').
        let d = PdfDate::parse_pdf("D:199812231952-08'00'").unwrap();
        assert_eq!(d.to_xmp(), "1998-12-23T19:52:00-08:00");
        assert_eq!(
            PdfDate::parse_pdf("D:2001").unwrap().to_pdf(),
            "D:20010101000000+00'00'"
        );
        assert_eq!(PdfDate::parse_pdf("D:20011301"), None);
        assert_eq!(PdfDate::parse_pdf("yesterday"), None);
    }

    #[test]
    fn srgb_profile_is_an_rgb_display_profile_of_icc_version_2() {
        // ICC.1:2001-04 §6.1 header fields.
        assert_eq!(&SRGB_ICC[36..40], b"acsp");
        assert_eq!(&SRGB_ICC[12..16], b"mntr");
        assert_eq!(&SRGB_ICC[16..20], b"RGB ");
        assert_eq!(SRGB_ICC[8], 2);
        let size = u32::from_be_bytes(SRGB_ICC[0..4].try_into().unwrap()) as usize;
        assert_eq!(size, SRGB_ICC.len());
    }
}
