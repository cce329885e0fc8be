//! Draws a [`PlotData`] page with plotters on an SVG string or an RGB buffer
//! (encoded to PNG here). Text uses a bundled font subset, so no system font
//! library is needed.

use std::sync::OnceLock;

use plotters::coord::Shift;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use plotters::style::FontStyle;

use super::{Marker, MarkerKind, PlotData, PlotError, Series};
use crate::scale::Scale;

/// Font for text in bitmaps (SVG text names the family and lets the viewer draw it).
const FONT_BYTES: &[u8] = include_bytes!("../../assets/fonts/DejaVuSans-subset.ttf");
const FONT: &str = "sans-serif";

/// Height of the title block (px).
const TITLE_PX: u32 = 170;
/// Width reserved for y tick labels, the same in every panel so x axes align (px).
const Y_LABELS_PX: u32 = 96;
/// Marker labels drawn at most; the title block counts the rest.
const MAX_MARKER_LABELS: usize = 12;
/// Relative energy-balance error drawn as a guide (Belytschko, Liu & Moran,
/// Nonlinear Finite Elements for Continua and Structures, 2000, §6.2.3, from
/// memory: ε ≈ 10⁻²).
const BALANCE_GUIDE: f64 = 0.01;

fn err<E: std::fmt::Debug>(e: E) -> PlotError {
    PlotError::Draw(format!("{e:?}"))
}

fn ensure_font() -> Result<(), PlotError> {
    static REGISTERED: OnceLock<Result<(), String>> = OnceLock::new();
    REGISTERED
        .get_or_init(|| {
            for style in [FontStyle::Normal, FontStyle::Bold] {
                plotters::style::register_font(FONT, style, FONT_BYTES)
                    .map_err(|_| "the bundled font cannot be read".to_string())?;
            }
            Ok(())
        })
        .clone()
        .map_err(PlotError::Draw)
}

/// The page as SVG text.
pub(super) fn svg(data: &PlotData, size: (u32, u32)) -> Result<String, PlotError> {
    ensure_font()?;
    let mut out = String::new();
    {
        let root = SVGBackend::with_string(&mut out, size).into_drawing_area();
        page(&root, true, data)?;
        root.present().map_err(err)?;
    }
    Ok(out)
}

/// The page as PNG bytes.
pub(super) fn png(data: &PlotData, size: (u32, u32)) -> Result<Vec<u8>, PlotError> {
    ensure_font()?;
    let (w, h) = size;
    let mut rgb = vec![0u8; w as usize * h as usize * 3];
    {
        let root = BitMapBackend::with_buffer(&mut rgb, size).into_drawing_area();
        page(&root, false, data)?;
        root.present().map_err(err)?;
    }
    let mut out = Vec::new();
    let mut enc = png::Encoder::new(&mut out, w, h);
    enc.set_color(png::ColorType::Rgb);
    enc.set_depth(png::BitDepth::Eight);
    let enc_err = |e: png::EncodingError| PlotError::Encode(e.to_string());
    let mut writer = enc.write_header().map_err(enc_err)?;
    writer.write_image_data(&rgb).map_err(enc_err)?;
    writer.finish().map_err(enc_err)?;
    Ok(out)
}

fn grey(v: u8) -> RGBColor {
    RGBColor(v, v, v)
}

/// Tick label: compact, scientific outside 1e-3..1e5.
fn tick(v: f64) -> String {
    let a = v.abs();
    if v == 0.0 {
        "0".into()
    } else if !(1e-3..1e5).contains(&a) {
        format!("{v:.2e}")
    } else {
        let s = format!("{v:.4}");
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    }
}

/// Tick label with 2 significant digits (for the uneven ticks of a symmetric log).
fn tick_short(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 {
        "0".into()
    } else if !(1e-2..1e4).contains(&a) {
        format!("{v:.1e}")
    } else {
        let digits = (1 - a.log10().floor() as i32).max(0) as usize;
        format!("{v:.digits$}")
    }
}

/// Grey level, width and dash of the i-th line of a panel: told apart without colour.
fn line_style(i: usize) -> (RGBColor, u32, bool) {
    match i % 5 {
        0 => (grey(0), 2, false),
        1 => (grey(130), 3, false),
        2 => (grey(0), 1, true),
        3 => (grey(90), 1, false),
        _ => (grey(160), 2, true),
    }
}

fn marker_style(kind: MarkerKind) -> (RGBColor, u32, bool) {
    match kind {
        MarkerKind::Critical => (grey(0), 2, false),
        MarkerKind::Warning => (grey(90), 1, true),
        MarkerKind::Onset => (grey(0), 1, true),
        MarkerKind::Crash => (grey(0), 4, false),
        MarkerKind::Restart => (grey(150), 2, true),
    }
}

fn x_range(data: &PlotData) -> (f64, f64) {
    let xs = data
        .energies
        .iter()
        .chain(&data.probes)
        .chain(data.balance.iter())
        .chain(data.step.iter())
        .chain(data.growth.iter())
        .flat_map(|s| s.points.iter().map(|p| p.0))
        .chain(data.markers.iter().map(|m| m.x));
    let (lo, hi) = xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
        (a.min(x), b.max(x))
    });
    if !lo.is_finite() || !hi.is_finite() {
        (0.0, 1.0)
    } else if hi > lo {
        (lo, hi)
    } else {
        (lo - 0.5, lo + 0.5)
    }
}

/// `joins`: the backend draws wide polylines with sane joins (SVG does).
fn page<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    joins: bool,
    data: &PlotData,
) -> Result<(), PlotError> {
    root.fill(&WHITE).map_err(err)?;
    let (title, body) = root.split_vertically(TITLE_PX);
    title_block(&title, data)?;
    let h = body.dim_in_pixel().1;
    // Energies, balance, step, growth, probes: shares of the body height.
    let cuts = [0.25, 0.41, 0.57, 0.76].map(|f| (f * f64::from(h)) as u32);
    let areas = body.split_by_breakpoints::<u32, u32, _, _>([], cuts);
    let xr = x_range(data);
    let energies: Vec<&Series> = data.energies.iter().collect();
    let e_scale = Scale::choose(ys(&energies), 4.0);
    let probes: Vec<&Series> = data.probes.iter().collect();
    let p_scale = Scale::choose(ys(&probes), 4.0);
    let e_unit = energies.iter().find_map(|s| s.unit.clone());
    let panels: [Panel; 5] = [
        Panel {
            caption: "Energies",
            y_desc: axis_desc("energy", e_unit.as_deref(), e_scale),
            series: energies,
            scale: e_scale,
            guides: vec![],
            empty: "no energy column in this history",
            label_markers: true,
        },
        Panel {
            caption: "Energy-balance error (created − absorbed, % of energy scale)",
            y_desc: "balance error [%]".into(),
            series: data.balance.iter().collect(),
            scale: Scale::Linear(100.0),
            guides: vec![
                (100.0 * BALANCE_GUIDE, "+1 %"),
                (-100.0 * BALANCE_GUIDE, "−1 %"),
            ],
            empty: "no balance estimate (no energy terms, or too few rows)",
            label_markers: false,
        },
        step_panel(data),
        Panel {
            caption: "Growth per solver step (spectral radius of the fitted one-step map)",
            y_desc: "growth per step".into(),
            series: data.growth.iter().collect(),
            scale: Scale::Linear(1.0),
            guides: vec![(1.0, "ρ = 1")],
            empty: "no growth estimate (too few rows or no oscillating signal)",
            label_markers: false,
        },
        Panel {
            caption: "Probes",
            y_desc: axis_desc("value", common_unit(&data.probes), p_scale),
            series: probes,
            scale: p_scale,
            guides: vec![],
            empty: "no probe column in this history",
            label_markers: false,
        },
    ];
    for (area, panel) in areas.iter().zip(panels.iter()) {
        draw_panel(area, joins, panel, xr, &data.x_label, &data.markers)?;
    }
    Ok(())
}

/// The unit all `series` share, if they do.
fn common_unit(series: &[Series]) -> Option<&str> {
    let first = series.first()?.unit.as_deref()?;
    series
        .iter()
        .all(|s| s.unit.as_deref() == Some(first))
        .then_some(first)
}

/// The y values of some series.
fn ys<'a>(series: &'a [&Series]) -> impl Iterator<Item = f64> + 'a {
    series.iter().flat_map(|s| s.points.iter().map(|p| p.1))
}

fn axis_desc(what: &str, unit: Option<&str>, scale: Scale) -> String {
    let u = unit.map(|u| format!(" [{u}]")).unwrap_or_default();
    match scale {
        Scale::Log => format!("{what}{u}, log"),
        Scale::SymLog(_) => format!("{what}{u}, sym. log"),
        Scale::Linear(_) => format!("{what}{u}"),
    }
}

fn step_panel(data: &PlotData) -> Panel<'_> {
    let series: Vec<&Series> = data.step.iter().collect();
    let scale = Scale::choose(ys(&series), 2.0);
    let (name, unit) = data.step.as_ref().map_or(("time step Δt", None), |s| {
        (s.name.as_str(), s.unit.as_deref())
    });
    Panel {
        caption: if name.starts_with("output") {
            "Output interval (no step column: Δt between written rows)"
        } else {
            "Time step"
        },
        y_desc: axis_desc("Δt", unit, scale),
        series,
        scale,
        guides: vec![],
        empty: "no time-step or time column in this history",
        label_markers: false,
    }
}

struct Panel<'a> {
    caption: &'static str,
    y_desc: String,
    series: Vec<&'a Series>,
    scale: Scale,
    guides: Vec<(f64, &'static str)>,
    empty: &'static str,
    label_markers: bool,
}

fn y_range(panel: &Panel) -> Option<(f64, f64)> {
    let ys = panel
        .series
        .iter()
        .flat_map(|s| s.points.iter().filter_map(|p| panel.scale.map(p.1)))
        .chain(panel.guides.iter().map(|g| g.0));
    let (lo, hi) = ys.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), y| {
        (a.min(y), b.max(y))
    });
    if !lo.is_finite() || !hi.is_finite() || panel.series.is_empty() {
        return None;
    }
    let pad = if hi > lo {
        0.06 * (hi - lo)
    } else {
        0.5 * lo.abs().max(1e-12)
    };
    Some((lo - pad, hi + pad))
}

fn draw_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    joins: bool,
    panel: &Panel,
    (x0, x1): (f64, f64),
    x_label: &str,
    markers: &[Marker],
) -> Result<(), PlotError> {
    let yr = y_range(panel);
    let (y0, y1) = yr.unwrap_or((0.0, 1.0));
    let mut chart = ChartBuilder::on(area)
        .margin_left(12)
        .margin_right(24)
        .margin_top(6)
        .caption(panel.caption, (FONT, 17).into_font().style(FontStyle::Bold))
        .x_label_area_size(40)
        .y_label_area_size(Y_LABELS_PX)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(err)?;
    let scale = panel.scale;
    let y_fmt = move |v: &f64| match scale {
        Scale::Log => format!("1e{v:.1}").replace(".0", ""),
        Scale::SymLog(_) => tick_short(scale.unmap(*v)),
        Scale::Linear(_) => tick(*v),
    };
    let x_fmt = |v: &f64| tick(*v);
    chart
        .configure_mesh()
        .x_desc(x_label)
        .y_desc(panel.y_desc.as_str())
        .label_style((FONT, 13))
        .axis_desc_style((FONT, 14))
        .light_line_style(grey(240))
        .bold_line_style(grey(215))
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt)
        .x_labels(10)
        .y_labels(if yr.is_some() { 6 } else { 0 })
        .draw()
        .map_err(err)?;
    if yr.is_none() {
        let mid = ((x0 + x1) / 2.0, (y0 + y1) / 2.0);
        let ink = grey(90);
        let style = TextStyle::from((FONT, 16).into_font()).color(&ink).pos(
            plotters::style::text_anchor::Pos::new(
                plotters::style::text_anchor::HPos::Center,
                plotters::style::text_anchor::VPos::Center,
            ),
        );
        chart
            .draw_series(std::iter::once(Text::new(panel.empty, mid, style)))
            .map_err(err)?;
        return Ok(());
    }
    for &(y, label) in &panel.guides {
        chart
            .draw_series(DashedLineSeries::new(
                [(x0, y), (x1, y)],
                6,
                4,
                grey(60).stroke_width(1),
            ))
            .map_err(err)?;
        boxed_label(&chart, label, (x1, y), true, y >= 0.0)?;
    }
    for m in markers {
        marker_line(&mut chart, m, (y0, y1))?;
    }
    for (i, s) in panel.series.iter().enumerate() {
        let (color, width, dashed) = line_style(i);
        let style = color.stroke_width(width);
        let pts: Vec<(f64, f64)> = s
            .points
            .iter()
            .filter_map(|&(x, y)| panel.scale.map(y).map(|y| (x, y)))
            .collect();
        let anno = if dashed {
            chart
                .draw_series(DashedLineSeries::new(pts, 8, 5, style))
                .map_err(err)?
        } else if width > 1 && !joins {
            // The bitmap backend joins wide polylines with unlimited mitres,
            // which spike at the sharp turns of an envelope: draw the
            // segments separately instead.
            chart
                .draw_series(pts.windows(2).map(|w| PathElement::new(w.to_vec(), style)))
                .map_err(err)?
        } else {
            chart
                .draw_series(LineSeries::new(pts, style))
                .map_err(err)?
        };
        anno.label(s.name.as_str()).legend(move |(x, y)| {
            PathElement::new(vec![(x, y), (x + 24, y)], color.stroke_width(width))
        });
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperLeft)
        .background_style(WHITE.mix(0.85))
        .border_style(grey(120))
        .label_font((FONT, 13))
        .draw()
        .map_err(err)?;
    if panel.label_markers {
        for (i, m) in markers.iter().take(MAX_MARKER_LABELS).enumerate() {
            // Stagger labels downwards so neighbours do not overprint.
            let y = y1 - (y1 - y0) * (0.02 + 0.09 * (i % 6) as f64);
            let right_side = (m.x - x0) / (x1 - x0) > 0.7;
            let text = format!("{} (line {})", m.label, m.line);
            boxed_label(&chart, &text, (m.x, y), right_side, false)?;
        }
    }
    Ok(())
}

type Chart<'a, DB> = ChartContext<'a, DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Text on a white box at `at`; to the left of `at` when `leftwards`, above
/// it when `above`, else to the right and below.
fn boxed_label<DB: DrawingBackend>(
    chart: &Chart<'_, DB>,
    text: &str,
    at: (f64, f64),
    leftwards: bool,
    above: bool,
) -> Result<(), PlotError> {
    let style = TextStyle::from((FONT, 12).into_font());
    let area = chart.plotting_area();
    let (w, h) = area.estimate_text_size(text, &style).map_err(err)?;
    let (w, h) = (w as i32 + 6, h as i32 + 4);
    let dx = if leftwards { -w - 3 } else { 3 };
    let dy = if above { -h - 2 } else { 2 };
    let label = EmptyElement::at(at)
        + Rectangle::new([(dx, dy), (dx + w, dy + h)], WHITE.mix(0.9).filled())
        + Text::new(text.to_string(), (dx + 3, dy + 2), style);
    area.draw(&label).map_err(err)
}

fn marker_line<DB: DrawingBackend>(
    chart: &mut Chart<'_, DB>,
    m: &Marker,
    (y0, y1): (f64, f64),
) -> Result<(), PlotError> {
    let (color, width, dashed) = marker_style(m.kind);
    let style = color.stroke_width(width);
    let line = [(m.x, y0), (m.x, y1)];
    if dashed {
        chart
            .draw_series(DashedLineSeries::new(line, 5, 4, style))
            .map_err(err)?;
    } else {
        chart
            .draw_series(LineSeries::new(line, style))
            .map_err(err)?;
    }
    Ok(())
}

fn title_block<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &PlotData,
) -> Result<(), PlotError> {
    let t = &data.title;
    let big = (FONT, 24).into_font().style(FontStyle::Bold);
    area.draw_text(
        &format!("rhoscope report — {}", t.file),
        &big.into_text_style(area),
        (20, 14),
    )
    .map_err(err)?;
    // Verdict badge: filled black for critical, grey for warning, outlined for ok.
    let verdict = t.verdict.to_uppercase();
    let (fill, ink) = match t.verdict.as_str() {
        "critical" => (grey(0), WHITE),
        "warning" => (grey(150), BLACK),
        _ => (WHITE, BLACK),
    };
    area.draw(&Rectangle::new([(20, 50), (190, 84)], fill.filled()))
        .map_err(err)?;
    area.draw(&Rectangle::new(
        [(20, 50), (190, 84)],
        BLACK.stroke_width(2),
    ))
    .map_err(err)?;
    let badge = TextStyle::from((FONT, 20).into_font().style(FontStyle::Bold)).color(&ink);
    area.draw_text(&verdict, &badge, (32, 57)).map_err(err)?;
    let small = TextStyle::from((FONT, 15).into_font()).color(&BLACK);
    for (i, (label, value)) in t.figures.iter().enumerate() {
        let (col, row) = (i % 3, i / 3);
        let pos = (220 + 330 * col as i32, 50 + 22 * row as i32);
        area.draw_text(&format!("{label}: {value}"), &small, pos)
            .map_err(err)?;
    }
    let extra = data.markers.len().saturating_sub(MAX_MARKER_LABELS);
    let more = if extra > 0 {
        format!("   ({extra} more markers drawn unlabelled)")
    } else {
        String::new()
    };
    let key = format!(
        "Markers: thick black = first NaN/Inf · black = critical alarm · dashed grey = warning · \
         dashed black = estimated onset · dashed light grey = restart{more}"
    );
    let note_ink = grey(60);
    let note = TextStyle::from((FONT, 13).into_font()).color(&note_ink);
    area.draw_text(&key, &note, (20, 120)).map_err(err)?;
    area.draw_text(
        "An alarm is advice: the run's owner and the site's own rules decide what to do.",
        &note,
        (20, 142),
    )
    .map_err(err)?;
    Ok(())
}
