//! Generated from fonts_open/fonts.toml (one entry per `file`); a test checks the two agree.

/// Every shelf font file, by its path under `fonts_open/`, with its bytes.
pub(super) const FONT_FILES: &[(&str, &[u8])] = &[
    ("amiri/Amiri-Regular.ttf", include_bytes!("../../fonts_open/amiri/Amiri-Regular.ttf")),
    ("amiri/Amiri-Bold.ttf", include_bytes!("../../fonts_open/amiri/Amiri-Bold.ttf")),
    (
        "noto-naskh-arabic/NotoNaskhArabic-Regular.ttf",
        include_bytes!("../../fonts_open/noto-naskh-arabic/NotoNaskhArabic-Regular.ttf"),
    ),
    (
        "noto-naskh-arabic/NotoNaskhArabic-Bold.ttf",
        include_bytes!("../../fonts_open/noto-naskh-arabic/NotoNaskhArabic-Bold.ttf"),
    ),
    ("lateef/Lateef-Regular.ttf", include_bytes!("../../fonts_open/lateef/Lateef-Regular.ttf")),
    ("lateef/Lateef-Bold.ttf", include_bytes!("../../fonts_open/lateef/Lateef-Bold.ttf")),
    (
        "noto-sans-arabic/NotoSansArabic-Regular.ttf",
        include_bytes!("../../fonts_open/noto-sans-arabic/NotoSansArabic-Regular.ttf"),
    ),
    (
        "noto-sans-arabic/NotoSansArabic-Bold.ttf",
        include_bytes!("../../fonts_open/noto-sans-arabic/NotoSansArabic-Bold.ttf"),
    ),
    ("thabit/Thabit.ttf", include_bytes!("../../fonts_open/thabit/Thabit.ttf")),
    ("thabit/Thabit-Bold.ttf", include_bytes!("../../fonts_open/thabit/Thabit-Bold.ttf")),
    (
        "noto-kufi-arabic/NotoKufiArabic-Regular.ttf",
        include_bytes!("../../fonts_open/noto-kufi-arabic/NotoKufiArabic-Regular.ttf"),
    ),
    (
        "noto-kufi-arabic/NotoKufiArabic-Bold.ttf",
        include_bytes!("../../fonts_open/noto-kufi-arabic/NotoKufiArabic-Bold.ttf"),
    ),
    ("lemonada/Lemonada-Regular.otf", include_bytes!("../../fonts_open/lemonada/Lemonada-Regular.otf")),
    ("lemonada/Lemonada-Bold.otf", include_bytes!("../../fonts_open/lemonada/Lemonada-Bold.otf")),
    ("scheherazade/Scheherazade-Regular.ttf", include_bytes!("../../fonts_open/scheherazade/Scheherazade-Regular.ttf")),
    ("scheherazade/Scheherazade-Bold.ttf", include_bytes!("../../fonts_open/scheherazade/Scheherazade-Bold.ttf")),
    ("harmattan/Harmattan-Regular.ttf", include_bytes!("../../fonts_open/harmattan/Harmattan-Regular.ttf")),
    ("harmattan/Harmattan-Bold.ttf", include_bytes!("../../fonts_open/harmattan/Harmattan-Bold.ttf")),
    ("alkalami/Alkalami-Regular.ttf", include_bytes!("../../fonts_open/alkalami/Alkalami-Regular.ttf")),
];
