//! Checks shared by the figure tests: SVG well-formedness, the print size of an SVG/PNG pair
//! (millimetres, 300 dpi), the smallest type, and the palette.
#![allow(dead_code)]

use std::path::Path;

/// The 8 colours of Okabe & Ito (2008), "Color Universal Design", as published (the same hex
/// values as R's `grDevices::palette.colors(palette = "Okabe-Ito")`): black, orange, sky blue,
/// bluish green, yellow, blue, vermillion, reddish purple.
pub const OKABE_ITO_HEX: [&str; 8] = [
    "#000000", "#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7",
];

/// 7 pt at print size, in millimetres (1 pt = 1/72 inch).
pub const MIN_TYPE_MM: f64 = 7.0 / 72.0 * 25.4;

/// A small XML well-formedness check: every tag closes in order, and the root is <svg>.
/// Returns the element names in document order and the (trimmed) text between tags.
pub fn xml_elements(text: &str) -> (Vec<String>, Vec<String>) {
    let mut stack: Vec<String> = Vec::new();
    let mut names = Vec::new();
    let mut texts = Vec::new();
    let mut rest = text;
    while let Some(i) = rest.find('<') {
        let between = rest[..i].trim();
        if !between.is_empty() {
            texts.push(between.to_string());
        }
        rest = &rest[i + 1..];
        let end = rest.find('>').expect("unclosed tag");
        let tag = &rest[..end];
        rest = &rest[end + 1..];
        if tag.starts_with('?') || tag.starts_with('!') {
            continue;
        }
        if let Some(close) = tag.strip_prefix('/') {
            assert_eq!(
                stack.pop().as_deref(),
                Some(close.trim()),
                "mismatched </{close}>"
            );
            continue;
        }
        let name: String = tag
            .chars()
            .take_while(|c| !c.is_whitespace() && *c != '/')
            .collect();
        if names.is_empty() {
            assert_eq!(name, "svg", "root element");
        }
        names.push(name.clone());
        if !tag.ends_with('/') {
            stack.push(name);
        }
    }
    assert!(stack.is_empty(), "unclosed elements {stack:?}");
    (names, texts)
}

/// The value of attribute `name` in the tag text `tag`.
pub fn attr<'a>(tag: &'a str, name: &str) -> Option<&'a str> {
    let key = format!(" {name}=\"");
    let i = tag.find(&key)? + key.len();
    let j = tag[i..].find('"')?;
    Some(&tag[i..i + j])
}

/// The `<svg>` element's width and height (in mm: fails otherwise) and viewBox size.
pub fn svg_size(text: &str) -> ((f64, f64), (f64, f64)) {
    let start = text.find("<svg").expect("<svg");
    let tag = &text[start..start + text[start..].find('>').unwrap()];
    let mm = |n: &str| -> f64 {
        let v = attr(tag, n).unwrap_or_else(|| panic!("no {n} in {tag}"));
        v.strip_suffix("mm")
            .unwrap_or_else(|| panic!("{n}=\"{v}\" is not in mm"))
            .parse()
            .unwrap()
    };
    let vb: Vec<f64> = attr(tag, "viewBox")
        .expect("viewBox")
        .split(' ')
        .map(|x| x.parse().unwrap())
        .collect();
    ((mm("width"), mm("height")), (vb[2], vb[3]))
}

/// Every `font-size` in the SVG (viewBox units).
pub fn font_sizes(text: &str) -> Vec<f64> {
    text.match_indices(" font-size=\"")
        .map(|(i, k)| {
            let r = &text[i + k.len()..];
            r[..r.find('"').unwrap()].parse().unwrap()
        })
        .collect()
}

/// Every `#RRGGBB` colour in the SVG.
pub fn colours(text: &str) -> Vec<String> {
    text.match_indices('#')
        .filter_map(|(i, _)| text.get(i..i + 7))
        .filter(|c| c[1..].chars().all(|x| x.is_ascii_hexdigit()))
        .map(|c| c.to_ascii_uppercase())
        .collect()
}

/// The y (viewBox units) of every `<text>` element whose text is `label`.
pub fn text_y(svg: &str, label: &str) -> Vec<f64> {
    let mut out = Vec::new();
    let mut rest = svg;
    while let Some(i) = rest.find("<text ") {
        rest = &rest[i..];
        let end = rest.find('>').unwrap();
        let tag = &rest[..end];
        let close = rest.find("</text>").unwrap();
        if rest[end + 1..close].trim() == label {
            out.push(attr(tag, "y").unwrap().parse().unwrap());
        }
        rest = &rest[close..];
    }
    out
}

/// A decoded PNG: size, resolution and share of pixels that are not white.
pub struct PngInfo {
    /// Width, px.
    pub width: u32,
    /// Height, px.
    pub height: u32,
    /// Pixels per metre (pHYs), if given.
    pub ppm: Option<(u32, u32)>,
    /// Share of pixels not white.
    pub ink: f64,
}

/// Decodes a PNG.
pub fn png_info(path: &Path) -> PngInfo {
    let bytes = std::fs::read(path).unwrap();
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "PNG signature");
    let decoder = png::Decoder::new(std::io::Cursor::new(bytes));
    let mut reader = decoder.read_info().unwrap();
    let ppm = reader
        .info()
        .pixel_dims
        .filter(|d| d.unit == png::Unit::Meter)
        .map(|d| (d.xppu, d.yppu));
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    let px = info.color_type.samples();
    let data = &buf[..info.buffer_size()];
    let n = data.len() / px;
    let dark = data
        .chunks(px)
        .filter(|p| p.iter().take(3).any(|&v| v < 250))
        .count();
    PngInfo {
        width: info.width,
        height: info.height,
        ppm,
        ink: dark as f64 / n as f64,
    }
}

/// Checks one figure `dir/<name>.svg` + `.png` for print: the SVG is well formed with its size
/// in mm (85 for `_1col`, 180 for `_2col`) over a viewBox of the PNG's pixels, the PNG is
/// 300 dpi at that size (1004 or 2126 px wide, pHYs 11811 px/m), no type is below 7 pt, every
/// colour is an Okabe–Ito colour or a neutral grey, and the PNG has some ink but is not filled.
/// Returns the SVG text.
pub fn check_print_figure(dir: &Path, name: &str) -> String {
    let svg = std::fs::read_to_string(dir.join(format!("{name}.svg")))
        .unwrap_or_else(|e| panic!("{name}.svg: {e}"));
    xml_elements(&svg);
    let ((w_mm, h_mm), (vb_w, vb_h)) = svg_size(&svg);
    let (want_mm, want_px) = if name.ends_with("_2col") {
        (180.0, 2126)
    } else {
        assert!(name.ends_with("_1col"), "{name}: width suffix");
        (85.0, 1004)
    };
    assert_eq!(w_mm, want_mm, "{name}: SVG width");
    let png = png_info(&dir.join(format!("{name}.png")));
    // 85 mm and 180 mm at 300 dpi: 85 / 25.4 × 300 = 1003.9, 180 / 25.4 × 300 = 2126.0.
    assert_eq!(png.width, want_px, "{name}: PNG width");
    assert_eq!(
        (vb_w, vb_h),
        (png.width as f64, png.height as f64),
        "{name}"
    );
    assert!(
        (h_mm - png.height as f64 / 300.0 * 25.4).abs() < 0.2,
        "{name}: SVG height {h_mm} mm, PNG {} px",
        png.height
    );
    // 300 dpi = 300 / 0.0254 = 11811 pixels per metre.
    assert_eq!(png.ppm, Some((11811, 11811)), "{name}: pHYs");
    let units_per_mm = vb_w / w_mm;
    let sizes = font_sizes(&svg);
    assert!(!sizes.is_empty(), "{name}: no text");
    for s in sizes {
        assert!(
            // Within 0.1%: whole pixels make 85 mm 1004 px (85.01 mm at 300 dpi).
            s / units_per_mm >= MIN_TYPE_MM * 0.999,
            "{name}: type of {:.2} pt",
            s / units_per_mm / 25.4 * 72.0
        );
    }
    for c in colours(&svg) {
        let grey = c[1..3] == c[3..5] && c[3..5] == c[5..7];
        assert!(
            grey || OKABE_ITO_HEX.contains(&c.as_str()),
            "{name}: colour {c} is neither Okabe-Ito nor grey"
        );
    }
    assert!(
        png.ink > 0.005 && png.ink < 0.6,
        "{name}: {} of pixels drawn",
        png.ink
    );
    svg
}
