//! Figure files, one place for every `--plot`: which formats are accepted (the file's
//! extension: `.svg` or `.png`), the font text is drawn and measured with, and the
//! rendering of a [`Figure`] on plotters' SVG or bitmap backend into bytes that are then
//! written atomically like every output file.
//!
//! A command's `--plot` is parsed by [`parse_plot_path`], so an unknown extension is
//! refused (exit status 2) before anything is computed. The text font is DejaVu Sans,
//! embedded in the binary (`crates/cli/assets/`, Bitstream Vera license), so PNG figures
//! need no system font library and SVG text is measured with real glyph widths.

use std::path::{Path, PathBuf};
use std::sync::Once;

use plotters::coord::Shift;
use plotters::prelude::*;

use crate::error::CliError;
use crate::output::write::write_atomic;

/// The extensions `--plot` accepts, for messages.
pub const ACCEPTED: &str = ".svg, .png";

/// The font every figure's text uses, under the family name `sans-serif`.
const FONT: &[u8] = include_bytes!("../../assets/DejaVuSans.ttf");

/// A figure file format, chosen by the file's extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ImageFormat {
    /// Scalable vector graphics (`.svg`).
    Svg,
    /// Portable network graphics, 8-bit RGB (`.png`).
    Png,
}

impl ImageFormat {
    /// The format of `path` from its extension (any case), or why it is refused.
    pub fn of(path: &Path) -> Result<ImageFormat, String> {
        let ext = path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase);
        match ext.as_deref() {
            Some("svg") => Ok(ImageFormat::Svg),
            Some("png") => Ok(ImageFormat::Png),
            Some(other) => Err(format!(
                "`{}`: cannot write a .{other} figure; name the file with one of {ACCEPTED}",
                path.display()
            )),
            None => Err(format!(
                "`{}` has no extension; name the figure file with one of {ACCEPTED}",
                path.display()
            )),
        }
    }
}

/// Clap value parser of `--plot FILE`: the path, when its extension is accepted.
pub fn parse_plot_path(text: &str) -> Result<PathBuf, String> {
    let path = PathBuf::from(text);
    ImageFormat::of(&path)?;
    Ok(path)
}

/// Something that can be drawn on any plotters backend.
pub trait Figure {
    /// Size in pixels (SVG user units).
    fn size(&self) -> (u32, u32);
    /// Draw the whole figure, background included, on `root`.
    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>>;
}

/// Make the embedded font the `sans-serif` family (once per process).
pub fn register_font() {
    static ONCE: Once = Once::new();
    ONCE.call_once(|| {
        // The embedded font is known to parse; were it refused, drawing text would fail
        // with an error naming the font, which `write` reports.
        let _ = plotters::style::register_font("sans-serif", FontStyle::Normal, FONT);
    });
}

/// The SVG text of `figure`.
pub fn render_svg(figure: &impl Figure) -> Result<String, String> {
    register_font();
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, figure.size()).into_drawing_area();
        figure.draw(&root).map_err(|e| e.to_string())?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

/// The PNG bytes of `figure` (8-bit RGB).
pub fn render_png(figure: &impl Figure) -> Result<Vec<u8>, String> {
    register_font();
    let (w, h) = figure.size();
    let mut pixels = vec![255u8; 3 * w as usize * h as usize];
    {
        let root = BitMapBackend::with_buffer(&mut pixels, (w, h)).into_drawing_area();
        figure.draw(&root).map_err(|e| e.to_string())?;
        root.present().map_err(|e| e.to_string())?;
    }
    let mut bytes = Vec::new();
    let mut encoder = png::Encoder::new(&mut bytes, w, h);
    encoder.set_color(png::ColorType::Rgb);
    encoder.set_depth(png::BitDepth::Eight);
    let mut writer = encoder.write_header().map_err(|e| e.to_string())?;
    writer
        .write_image_data(&pixels)
        .map_err(|e| e.to_string())?;
    writer.finish().map_err(|e| e.to_string())?;
    Ok(bytes)
}

/// Render `figure` in the format of `path`'s extension and write it atomically.
pub fn write(path: &Path, figure: &impl Figure) -> Result<(), CliError> {
    let format = ImageFormat::of(path).map_err(CliError::Usage)?;
    let bytes = match format {
        ImageFormat::Svg => render_svg(figure).map(String::into_bytes),
        ImageFormat::Png => render_png(figure),
    }
    .map_err(|e| CliError::Write {
        path: path.to_path_buf(),
        source: std::io::Error::other(format!("drawing the figure failed: {e}")),
    })?;
    write_atomic(path, &bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A small figure with text and a line.
    struct Sample;

    impl Figure for Sample {
        fn size(&self) -> (u32, u32) {
            (120, 80)
        }
        fn draw<DB: DrawingBackend>(
            &self,
            root: &DrawingArea<DB, Shift>,
        ) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
            root.fill(&WHITE)?;
            root.draw(&PathElement::new(vec![(10, 70), (110, 10)], BLACK))?;
            root.draw(&Text::new("χ′ ± Tc", (10, 10), ("sans-serif", 16)))
        }
    }

    #[test]
    fn formats_follow_the_extension() {
        assert_eq!(ImageFormat::of(Path::new("a.svg")), Ok(ImageFormat::Svg));
        assert_eq!(
            ImageFormat::of(Path::new("dir/a.PNG")),
            Ok(ImageFormat::Png)
        );
        let e = ImageFormat::of(Path::new("a.pdf")).unwrap_err();
        assert!(e.contains(".pdf") && e.contains(".svg, .png"), "{e}");
        assert!(ImageFormat::of(Path::new("figure")).is_err());
        assert!(parse_plot_path("out.jpg").is_err());
    }

    #[test]
    fn png_is_a_png_of_the_figure_size_with_text_drawn() {
        let bytes = render_png(&Sample).unwrap();
        assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "PNG signature");
        let decoder = png::Decoder::new(std::io::Cursor::new(&bytes));
        let mut reader = decoder.read_info().unwrap();
        let mut pixels = vec![0; reader.output_buffer_size().unwrap()];
        let info = reader.next_frame(&mut pixels).unwrap();
        assert_eq!((info.width, info.height), (120, 80));
        // Text and line are drawn: some pixels are dark; the background stays white.
        let dark = pixels
            .chunks(3)
            .filter(|p| p.iter().all(|&c| c < 100))
            .count();
        assert!(dark > 50, "{dark} dark pixels");
        assert_eq!(&pixels[..3], &[255, 255, 255]);
    }

    #[test]
    fn svg_keeps_text_as_text() {
        let svg = render_svg(&Sample).unwrap();
        assert!(svg.starts_with("<svg") && svg.contains("χ′ ± Tc"), "{svg}");
    }
}
