//! Generic charts from the SVG writer and the scales: a plot of layers (lines, shaded bands,
//! points, a binned density of many points, histogram bars) with titled axes, a legend and a
//! title; small multiples of plots sharing the y axis.
//!
//! Point clouds switch to a binned density (a 2-D histogram drawn as rectangles coloured by
//! a grey ramp) above a threshold number of points ([`cloud`]), so a figure of a
//! million rows is a few thousand rectangles, not a million circles.

use serde::Serialize;

use super::palette::{self, Ramp};
use super::scale::{extent, Linear, Ticks};
use super::svg::{num, path_data, Svg};

/// The extent of some values, `None` when none is finite.
type Span = Option<(f64, f64)>;

/// Bins of a binned density along x and y.
pub const DENSITY_BINS: (usize, usize) = (80, 50);
/// Tick labels and legend text, pixels.
pub const SMALL_FONT: f64 = 11.0;

/// Points counted in the cells of a regular grid (a 2-D histogram).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Density {
    /// Cell edges along x, increasing.
    pub x_edges: Vec<f64>,
    /// Cell edges along y, increasing.
    pub y_edges: Vec<f64>,
    /// Counts, row-major by y cell then x cell (`counts[iy * nx + ix]`).
    pub counts: Vec<u32>,
    /// Points counted (finite pairs).
    pub points: usize,
}

impl Density {
    /// Counts the finite (x, y) pairs in `nx` x `ny` equal cells spanning their extent; a point
    /// on the upper edge falls in the last cell.
    ///
    /// # Examples
    /// ```
    /// use trajweave_report::chart::Density;
    /// let d = Density::of(&[0.0, 1.0, 1.0], &[0.0, 1.0, 0.9], 2, 2);
    /// assert_eq!(d.counts, vec![1, 0, 0, 2]);
    /// ```
    pub fn of(x: &[f64], y: &[f64], nx: usize, ny: usize) -> Density {
        let (nx, ny) = (nx.max(1), ny.max(1));
        let pairs = || {
            x.iter()
                .zip(y)
                .filter(|(a, b)| a.is_finite() && b.is_finite())
        };
        let (x0, x1) = extent(pairs().map(|p| p.0)).unwrap_or((0.0, 1.0));
        let (y0, y1) = extent(pairs().map(|p| p.1)).unwrap_or((0.0, 1.0));
        let edges = |lo: f64, hi: f64, n: usize| -> Vec<f64> {
            let hi = if hi > lo { hi } else { lo + 1.0 };
            (0..=n)
                .map(|i| lo + (hi - lo) * i as f64 / n as f64)
                .collect()
        };
        let (xe, ye) = (edges(x0, x1, nx), edges(y0, y1, ny));
        let cell = |v: f64, e: &[f64], n: usize| {
            let u = (v - e[0]) / (e[n] - e[0]) * n as f64;
            (u.max(0.0) as usize).min(n - 1)
        };
        let mut counts = vec![0u32; nx * ny];
        let mut points = 0;
        for (&a, &b) in pairs() {
            counts[cell(b, &ye, ny) * nx + cell(a, &xe, nx)] += 1;
            points += 1;
        }
        Density {
            x_edges: xe,
            y_edges: ye,
            counts,
            points,
        }
    }
}

/// One layer of a plot. An empty `name` keeps the layer out of the legend.
#[derive(Debug, Clone, PartialEq)]
pub enum Layer {
    /// A polyline; non-finite points break it.
    Line {
        /// Legend entry.
        name: String,
        /// x values.
        x: Vec<f64>,
        /// y values.
        y: Vec<f64>,
        /// Stroke colour.
        colour: String,
        /// Stroke width, pixels.
        width: f64,
        /// Dashed stroke.
        dashed: bool,
    },
    /// A shaded area between two curves.
    Band {
        /// Legend entry.
        name: String,
        /// x values.
        x: Vec<f64>,
        /// Lower curve.
        lower: Vec<f64>,
        /// Upper curve.
        upper: Vec<f64>,
        /// Fill colour (drawn translucent).
        colour: String,
    },
    /// Dots.
    Points {
        /// Legend entry.
        name: String,
        /// x values.
        x: Vec<f64>,
        /// y values.
        y: Vec<f64>,
        /// Fill colour.
        colour: String,
    },
    /// Marked points of a few estimates: opaque circles of a given radius, each optionally
    /// labelled just above it (for example with the count behind the estimate).
    Markers {
        /// Legend entry.
        name: String,
        /// x values.
        x: Vec<f64>,
        /// y values.
        y: Vec<f64>,
        /// Fill colour.
        colour: String,
        /// Radius, pixels.
        radius: f64,
        /// One label per point, written above it (none when empty).
        labels: Vec<String>,
    },
    /// A binned density of many points.
    Density {
        /// Legend entry.
        name: String,
        /// The counts.
        density: Density,
    },
    /// Histogram bars on consecutive bins.
    Bars {
        /// Legend entry.
        name: String,
        /// Bin edges (one more than the counts).
        edges: Vec<f64>,
        /// Counts per bin.
        counts: Vec<f64>,
        /// Fill colour.
        colour: String,
    },
}

/// A line layer in series colour `i`.
///
/// # Examples
/// ```
/// use trajweave_report::chart::{line, Layer};
/// let l = line("mean", &[0.0, 1.0], &[2.0, 3.0], 0);
/// assert!(matches!(l, Layer::Line { ref colour, .. } if colour == "#0072B2"));
/// ```
pub fn line(name: &str, x: &[f64], y: &[f64], i: usize) -> Layer {
    Layer::Line {
        name: name.into(),
        x: x.to_vec(),
        y: y.to_vec(),
        colour: palette::series(i).into(),
        width: 2.0,
        // Past the palette's seven colours, series repeat a colour dashed.
        dashed: i >= palette::SERIES.len(),
    }
}

/// The data as dots when there are at most `threshold` points, otherwise as a binned density
/// of [`DENSITY_BINS`] cells.
///
/// # Examples
/// ```
/// use trajweave_report::chart::{cloud, Layer};
/// let x = vec![0.0, 1.0, 2.0];
/// assert!(matches!(cloud("data", &x, &x, 3), Layer::Points { .. }));
/// assert!(matches!(cloud("data", &x, &x, 2), Layer::Density { .. }));
/// ```
pub fn cloud(name: &str, x: &[f64], y: &[f64], threshold: usize) -> Layer {
    if x.len() <= threshold {
        Layer::Points {
            name: name.into(),
            x: x.to_vec(),
            y: y.to_vec(),
            colour: palette::GREY.into(),
        }
    } else {
        Layer::Density {
            name: format!("{name} (binned density: darker = more)"),
            density: Density::of(x, y, DENSITY_BINS.0, DENSITY_BINS.1),
        }
    }
}

impl Layer {
    fn name(&self) -> &str {
        match self {
            Layer::Line { name, .. }
            | Layer::Band { name, .. }
            | Layer::Points { name, .. }
            | Layer::Markers { name, .. }
            | Layer::Density { name, .. }
            | Layer::Bars { name, .. } => name,
        }
    }

    /// (x extent, y extent) of the finite values.
    fn extent(&self) -> (Span, Span) {
        match self {
            Layer::Line { x, y, .. } | Layer::Points { x, y, .. } | Layer::Markers { x, y, .. } => {
                (extent(x), extent(y))
            }
            Layer::Band {
                x, lower, upper, ..
            } => (extent(x), extent(lower.iter().chain(upper.iter()))),
            Layer::Density { density, .. } => (extent(&density.x_edges), extent(&density.y_edges)),
            Layer::Bars { edges, counts, .. } => {
                (extent(edges), extent(counts.iter().chain([0.0].iter())))
            }
        }
    }
}

/// A plot of layers with titled axes, a legend (for named layers) and a title.
#[derive(Debug, Clone, PartialEq)]
pub struct Plot {
    /// Title above the plot.
    pub title: String,
    /// x axis title, with units.
    pub x_title: String,
    /// y axis title, with units.
    pub y_title: String,
    /// Layers, drawn in order.
    pub layers: Vec<Layer>,
    /// Width, pixels.
    pub width: f64,
    /// Height, pixels.
    pub height: f64,
    /// The x axis ends where the data end (ticks inside the data's range only) instead of at
    /// the nice ticks around it: for time axes, so no curve seems to stop short of the axis.
    pub tight_x: bool,
    /// A row of numbers at risk under the x axis, at its ticks.
    pub at_risk: Option<AtRisk>,
}

/// Each subject's first and last visit time, for a "subjects in follow-up" row under a time
/// axis: at time t, the subjects with first <= t <= last.
#[derive(Debug, Clone, PartialEq)]
pub struct AtRisk {
    /// Label of the row.
    pub label: String,
    /// First visit times, sorted.
    first: Vec<f64>,
    /// Last visit times, sorted.
    last: Vec<f64>,
}

impl AtRisk {
    /// The row from each subject's (first, last) visit time.
    ///
    /// # Examples
    /// ```
    /// use trajweave_report::chart::AtRisk;
    /// let r = AtRisk::new("in follow-up", &[(0.0, 2.0), (0.0, 5.0), (1.0, 1.0)]);
    /// assert_eq!(r.count(0.0), 2);
    /// assert_eq!(r.count(1.0), 3);
    /// assert_eq!(r.count(2.0), 2);
    /// assert_eq!(r.count(2.5), 1);
    /// ```
    pub fn new(label: &str, spans: &[(f64, f64)]) -> AtRisk {
        let mut first: Vec<f64> = spans.iter().map(|s| s.0).collect();
        let mut last: Vec<f64> = spans.iter().map(|s| s.1).collect();
        first.sort_by(f64::total_cmp);
        last.sort_by(f64::total_cmp);
        AtRisk {
            label: label.into(),
            first,
            last,
        }
    }

    /// Subjects with first <= t <= last: (number started by t) - (number ended before t).
    pub fn count(&self, t: f64) -> usize {
        let started = self.first.partition_point(|&f| f <= t);
        let ended = self.last.partition_point(|&l| l < t);
        started.saturating_sub(ended)
    }
}

/// Extra height of a plot with a numbers-at-risk row, pixels.
const AT_RISK_ROW: f64 = 34.0;

/// The plotting area of a plot, in pixels.
#[derive(Debug, Clone, Copy)]
struct Frame {
    x0: f64,
    y0: f64,
    w: f64,
    h: f64,
}

fn union(a: Span, b: Span) -> Span {
    match (a, b) {
        (Some(a), Some(b)) => Some((a.0.min(b.0), a.1.max(b.1))),
        (a, None) => a,
        (None, b) => b,
    }
}

impl Plot {
    /// An empty 640 x 380 plot.
    pub fn new(title: &str, x_title: &str, y_title: &str) -> Plot {
        Plot {
            title: title.into(),
            x_title: x_title.into(),
            y_title: y_title.into(),
            layers: Vec::new(),
            width: 640.0,
            height: 380.0,
            tight_x: false,
            at_risk: None,
        }
    }

    /// The plot with a tight x axis ([`Plot::tight_x`]).
    pub fn tight(mut self) -> Plot {
        self.tight_x = true;
        self
    }

    /// The plot with one more layer.
    pub fn with(mut self, layer: Layer) -> Plot {
        self.layers.push(layer);
        self
    }

    fn data_extent(&self) -> (Span, Span) {
        self.layers.iter().fold((None, None), |(ax, ay), l| {
            let (x, y) = l.extent();
            (union(ax, x), union(ay, y))
        })
    }

    fn has_legend(&self) -> bool {
        self.layers.iter().any(|l| !l.name().is_empty())
    }

    /// The plot as an SVG document.
    ///
    /// # Examples
    /// ```
    /// use trajweave_report::chart::{line, Plot};
    /// let p = Plot::new("Mean", "time (years)", "y (units)").with(line("mean", &[0.0, 1.0], &[1.0, 2.0], 0));
    /// let svg = p.svg();
    /// assert!(svg.starts_with("<svg") && svg.contains("time (years)"));
    /// ```
    pub fn svg(&self) -> String {
        let mut s = Svg::new(self.width, self.height, &self.title);
        title(&mut s, &self.title);
        let legend_w = if self.has_legend() { 190.0 } else { 0.0 };
        let row = if self.at_risk.is_some() {
            AT_RISK_ROW
        } else {
            0.0
        };
        let frame = Frame {
            x0: 64.0,
            y0: 36.0,
            w: self.width - 64.0 - 16.0 - legend_w,
            h: self.height - 36.0 - 48.0 - row,
        };
        let (xe, ye) = self.data_extent();
        let xt = x_ticks(xe, 6, self.tight_x);
        let yt = ticks(ye, 5);
        self.draw(&mut s, frame, &xt, &yt, true);
        if let Some(r) = &self.at_risk {
            at_risk_row(&mut s, r, frame, &xt);
        }
        if legend_w > 0.0 {
            legend(&mut s, &self.layers, frame.x0 + frame.w + 16.0, frame.y0);
        }
        s.finish()
    }

    fn draw(&self, s: &mut Svg, f: Frame, xt: &XTicks, yt: &Ticks, y_labels: bool) {
        let xs = Linear::new(xt.domain, (f.x0, f.x0 + f.w));
        let ys = Linear::new(yt.span(), (f.y0 + f.h, f.y0));
        axes(s, f, &xs, &ys, &xt.ticks, yt, y_labels);
        s.text(
            f.x0 + f.w / 2.0,
            f.y0 + f.h + 40.0,
            &[("text-anchor", "middle")],
            &self.x_title,
        );
        if y_labels {
            let (x, y) = (14.0, f.y0 + f.h / 2.0);
            let rot = format!("rotate(-90 {} {})", num(x), num(y));
            s.text(
                x,
                y,
                &[("text-anchor", "middle"), ("transform", &rot)],
                &self.y_title,
            );
        }
        for layer in &self.layers {
            draw_layer(s, layer, &xs, &ys);
        }
    }
}

fn ticks(e: Option<(f64, f64)>, n: usize) -> Ticks {
    let (a, b) = e.unwrap_or((0.0, 1.0));
    Ticks::loose(a, b, n)
}

/// x ticks and the axis domain: the loose ticks and their span, or (tight) the data's extent
/// with only the ticks inside it.
struct XTicks {
    ticks: Ticks,
    domain: (f64, f64),
}

fn x_ticks(e: Option<(f64, f64)>, n: usize, tight: bool) -> XTicks {
    let loose = ticks(e, n);
    match e {
        Some((a, b)) if tight && b > a => {
            let slack = 1e-9 * loose.step;
            let mut t = loose.clone();
            t.values.retain(|v| *v >= a - slack && *v <= b + slack);
            XTicks {
                ticks: t,
                domain: (a, b),
            }
        }
        _ => XTicks {
            domain: loose.span(),
            ticks: loose,
        },
    }
}

/// The numbers at risk at the x ticks, in a row under the axis title.
fn at_risk_row(s: &mut Svg, r: &AtRisk, f: Frame, xt: &XTicks) {
    let xs = Linear::new(xt.domain, (f.x0, f.x0 + f.w));
    let y = f.y0 + f.h + 58.0;
    let small = num(SMALL_FONT);
    s.open("g", &[("font-size", &small), ("fill", "#333333")]);
    s.text(f.x0, y, &[], &r.label);
    for v in &xt.ticks.values {
        s.text(
            xs.map(*v),
            y + 14.0,
            &[("text-anchor", "middle")],
            &r.count(*v).to_string(),
        );
    }
    s.close();
}

fn title(s: &mut Svg, text: &str) {
    s.text(
        8.0,
        20.0,
        &[("font-size", "14"), ("font-weight", "bold")],
        text,
    );
}

fn axes(s: &mut Svg, f: Frame, xs: &Linear, ys: &Linear, xt: &Ticks, yt: &Ticks, y_labels: bool) {
    let small = num(SMALL_FONT);
    s.open("g", &[("stroke", "#dddddd"), ("stroke-width", "1")]);
    for v in &yt.values {
        let y = num(ys.map(*v));
        let (a, b) = (num(f.x0), num(f.x0 + f.w));
        s.leaf("line", &[("x1", &a), ("x2", &b), ("y1", &y), ("y2", &y)]);
    }
    s.close();
    let frame = [
        ("x", num(f.x0)),
        ("y", num(f.y0)),
        ("width", num(f.w)),
        ("height", num(f.h)),
    ];
    let mut attrs: Vec<(&str, &str)> = frame.iter().map(|(k, v)| (*k, v.as_str())).collect();
    attrs.extend([("fill", "none"), ("stroke", "#888888")]);
    s.leaf("rect", &attrs);
    s.open("g", &[("font-size", &small), ("fill", "#333333")]);
    for (v, label) in xt.values.iter().zip(xt.labels()) {
        s.text(
            xs.map(*v),
            f.y0 + f.h + 15.0,
            &[("text-anchor", "middle")],
            &label,
        );
    }
    if y_labels {
        for (v, label) in yt.values.iter().zip(yt.labels()) {
            s.text(
                f.x0 - 5.0,
                ys.map(*v) + 4.0,
                &[("text-anchor", "end")],
                &label,
            );
        }
    }
    s.close();
}

fn draw_layer(s: &mut Svg, layer: &Layer, xs: &Linear, ys: &Linear) {
    match layer {
        Layer::Line {
            x,
            y,
            colour,
            width,
            dashed,
            ..
        } => {
            let d = path_data(x.iter().zip(y).map(|(a, b)| (xs.map(*a), ys.map(*b))));
            let w = num(*width);
            let mut attrs = vec![
                ("d", d.as_str()),
                ("fill", "none"),
                ("stroke", colour.as_str()),
                ("stroke-width", w.as_str()),
            ];
            if *dashed {
                attrs.push(("stroke-dasharray", "6 4"));
            }
            s.leaf("path", &attrs);
        }
        Layer::Band {
            x,
            lower,
            upper,
            colour,
            ..
        } => {
            // Upper edge forwards, lower edge backwards; only where both ends are finite.
            let ok: Vec<usize> = (0..x.len().min(lower.len()).min(upper.len()))
                .filter(|&k| x[k].is_finite() && lower[k].is_finite() && upper[k].is_finite())
                .collect();
            let fwd = ok.iter().map(|&k| (xs.map(x[k]), ys.map(upper[k])));
            let back = ok.iter().rev().map(|&k| (xs.map(x[k]), ys.map(lower[k])));
            let mut d = path_data(fwd.chain(back));
            if !d.is_empty() {
                d.push('Z');
                s.leaf(
                    "path",
                    &[("d", &d), ("fill", colour), ("fill-opacity", "0.25")],
                );
            }
        }
        Layer::Points { x, y, colour, .. } => {
            s.open("g", &[("fill", colour), ("fill-opacity", "0.5")]);
            for (a, b) in x.iter().zip(y) {
                if a.is_finite() && b.is_finite() {
                    let (cx, cy) = (num(xs.map(*a)), num(ys.map(*b)));
                    s.leaf("circle", &[("cx", &cx), ("cy", &cy), ("r", "1.6")]);
                }
            }
            s.close();
        }
        Layer::Markers {
            x,
            y,
            colour,
            radius,
            labels,
            ..
        } => {
            let r = num(*radius);
            s.open("g", &[("fill", colour)]);
            for (a, b) in x.iter().zip(y) {
                if a.is_finite() && b.is_finite() {
                    let (cx, cy) = (num(xs.map(*a)), num(ys.map(*b)));
                    s.leaf("circle", &[("cx", &cx), ("cy", &cy), ("r", &r)]);
                }
            }
            s.close();
            if !labels.is_empty() {
                s.open("g", &[("font-size", "9"), ("fill", "#333333")]);
                for ((a, b), label) in x.iter().zip(y).zip(labels) {
                    if a.is_finite() && b.is_finite() {
                        let at = ys.map(*b) - radius - 3.0;
                        s.text(xs.map(*a), at, &[("text-anchor", "middle")], label);
                    }
                }
                s.close();
            }
        }
        Layer::Density { density, .. } => draw_density(s, density, xs, ys),
        Layer::Bars {
            edges,
            counts,
            colour,
            ..
        } => {
            s.open("g", &[("fill", colour), ("stroke", "#ffffff")]);
            for (k, c) in counts.iter().enumerate() {
                if let (Some(&a), Some(&b)) = (edges.get(k), edges.get(k + 1)) {
                    let (x0, x1, y0, y1) = (xs.map(a), xs.map(b), ys.map(*c), ys.map(0.0));
                    rect(s, x0, y0, x1 - x0, y1 - y0, None);
                }
            }
            s.close();
        }
    }
}

/// A rectangle, optionally filled (else the enclosing group's fill applies).
pub(crate) fn rect(s: &mut Svg, x: f64, y: f64, w: f64, h: f64, fill: Option<&str>) {
    let v = [num(x), num(y), num(w.max(0.0)), num(h.max(0.0))];
    let mut attrs = vec![
        ("x", v[0].as_str()),
        ("y", v[1].as_str()),
        ("width", v[2].as_str()),
        ("height", v[3].as_str()),
    ];
    if let Some(f) = fill {
        attrs.push(("fill", f));
    }
    s.leaf("rect", &attrs);
}

/// Cells coloured by log(1 + count) / log(1 + max count) on the grey ramp (dense cells dark);
/// empty cells are not drawn.
fn draw_density(s: &mut Svg, d: &Density, xs: &Linear, ys: &Linear) {
    let nx = d.x_edges.len().saturating_sub(1);
    let max = d.counts.iter().copied().max().unwrap_or(0);
    if nx == 0 || max == 0 {
        return;
    }
    let denom = f64::from(max).ln_1p();
    for (k, &c) in d.counts.iter().enumerate() {
        if c == 0 {
            continue;
        }
        let (ix, iy) = (k % nx, k / nx);
        let (Some(&xa), Some(&xb), Some(&ya), Some(&yb)) = (
            d.x_edges.get(ix),
            d.x_edges.get(ix + 1),
            d.y_edges.get(iy),
            d.y_edges.get(iy + 1),
        ) else {
            continue;
        };
        let colour = palette::ramp(Ramp::Grey, f64::from(c).ln_1p() / denom);
        let (x0, x1, y0, y1) = (xs.map(xa), xs.map(xb), ys.map(yb), ys.map(ya));
        // A quarter pixel of overlap hides hairline seams between cells.
        rect(s, x0, y0, x1 - x0 + 0.25, y1 - y0 + 0.25, Some(&colour));
    }
}

fn legend(s: &mut Svg, layers: &[Layer], x: f64, y: f64) {
    let small = num(SMALL_FONT);
    s.open("g", &[("font-size", &small)]);
    let mut row = 0.0;
    for layer in layers.iter().filter(|l| !l.name().is_empty()) {
        let cy = y + 8.0 + row * 18.0;
        let swatch = match layer {
            Layer::Line { colour, .. } | Layer::Band { colour, .. } => colour.clone(),
            Layer::Points { colour, .. }
            | Layer::Markers { colour, .. }
            | Layer::Bars { colour, .. } => colour.clone(),
            Layer::Density { .. } => palette::ramp(Ramp::Grey, 0.5),
        };
        let opacity = if matches!(layer, Layer::Band { .. }) {
            "0.35"
        } else {
            "1"
        };
        if let Layer::Line { dashed, .. } = layer {
            // A line swatch, so dashed series are told apart from solid ones.
            let v = [num(x), num(x + 14.0), num(cy)];
            let mut attrs = vec![
                ("x1", v[0].as_str()),
                ("x2", v[1].as_str()),
                ("y1", v[2].as_str()),
                ("y2", v[2].as_str()),
                ("stroke", swatch.as_str()),
                ("stroke-width", "3"),
            ];
            if *dashed {
                attrs.push(("stroke-dasharray", "4 2"));
            }
            s.leaf("line", &attrs);
        } else {
            let v = [num(x), num(cy - 5.0)];
            s.leaf(
                "rect",
                &[
                    ("x", &v[0]),
                    ("y", &v[1]),
                    ("width", "14"),
                    ("height", "10"),
                    ("fill", &swatch),
                    ("fill-opacity", opacity),
                ],
            );
        }
        for (j, part) in wrap(layer.name(), 26).iter().enumerate() {
            s.text(x + 20.0, cy + 4.0 + j as f64 * 13.0, &[], part);
            row += if j > 0 { 13.0 / 18.0 } else { 0.0 };
        }
        row += 1.0;
    }
    s.close();
}

/// Splits text into lines of at most about `width` characters at spaces.
pub(crate) fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    for word in text.split_whitespace() {
        match lines.last_mut() {
            Some(l) if l.chars().count() + 1 + word.chars().count() <= width => {
                l.push(' ');
                l.push_str(word);
            }
            _ => lines.push(word.to_string()),
        }
    }
    lines
}

/// Plots side by side in one SVG, sharing the y axis (ticks and labels on the first only) and
/// the x range; the legend of the first plot is drawn once at the right.
///
/// # Examples
/// ```
/// use trajweave_report::chart::{line, small_multiples, Plot};
/// let a = Plot::new("low", "t", "y").with(line("fit", &[0.0, 1.0], &[0.0, 1.0], 0));
/// let b = Plot::new("high", "t", "y").with(line("fit", &[0.0, 1.0], &[5.0, 9.0], 0));
/// let svg = small_multiples("By band", &[a, b], "y (units)", 200.0);
/// assert!(svg.contains(">low<") && svg.contains(">high<"));
/// ```
pub fn small_multiples(title_text: &str, panels: &[Plot], y_title: &str, panel_w: f64) -> String {
    let (xe, ye) = panels.iter().fold((None, None), |(ax, ay), p| {
        let (x, y) = p.data_extent();
        (union(ax, x), union(ay, y))
    });
    let tight = panels.iter().all(|p| p.tight_x) && !panels.is_empty();
    let (xt, yt) = (x_ticks(xe, 4, tight), ticks(ye, 5));
    let legend_w = if panels.first().is_some_and(Plot::has_legend) {
        190.0
    } else {
        0.0
    };
    let (left, gap, panel_h) = (64.0, 26.0, 260.0);
    let n = panels.len() as f64;
    let width = left + n * panel_w + (n - 1.0).max(0.0) * gap + 16.0 + legend_w;
    let height = 36.0 + 20.0 + panel_h + 48.0;
    let mut s = Svg::new(width, height, title_text);
    title(&mut s, title_text);
    for (k, p) in panels.iter().enumerate() {
        let f = Frame {
            x0: left + k as f64 * (panel_w + gap),
            y0: 56.0,
            w: panel_w,
            h: panel_h,
        };
        s.text(
            f.x0 + f.w / 2.0,
            f.y0 - 6.0,
            &[("text-anchor", "middle"), ("font-weight", "bold")],
            &p.title,
        );
        let mut shown = p.clone();
        shown.y_title = y_title.into();
        shown.draw(&mut s, f, &xt, &yt, k == 0);
    }
    if let Some(first) = panels.first().filter(|_| legend_w > 0.0) {
        legend(&mut s, &first.layers, width - legend_w, 56.0);
    }
    s.finish()
}

/// Counts of a histogram.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Histogram {
    /// Bin edges: nice numbers (Heckbert's step for about `bins` bins); bins are [a, b) except
    /// the last, which is closed.
    pub edges: Vec<f64>,
    /// Counts per bin.
    pub counts: Vec<usize>,
}

impl Histogram {
    /// Bins the finite values with about `bins` bins on nice edges.
    ///
    /// # Examples
    /// ```
    /// use trajweave_report::chart::Histogram;
    /// let h = Histogram::of(&[0.1, 0.5, 0.9, 1.0], 2);
    /// assert_eq!((h.edges.clone(), h.counts.clone()), (vec![0.0, 0.5, 1.0], vec![1, 3]));
    /// ```
    pub fn of(values: &[f64], bins: usize) -> Histogram {
        let t = ticks(extent(values), bins + 1);
        let edges = t.values;
        let k = edges.len().saturating_sub(1).max(1);
        let mut counts = vec![0usize; k];
        let (lo, step) = (edges.first().copied().unwrap_or(0.0), t.step);
        for v in values.iter().filter(|v| v.is_finite()) {
            let b = (((v - lo) / step + 1e-9).floor().max(0.0) as usize).min(k - 1);
            counts[b] += 1;
        }
        Histogram { edges, counts }
    }

    /// The histogram as a plot layer.
    pub fn layer(&self, name: &str, colour: usize) -> Layer {
        Layer::Bars {
            name: name.into(),
            edges: self.edges.clone(),
            counts: self.counts.iter().map(|&c| c as f64).collect(),
            colour: palette::series(colour).into(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::svg::tests::well_formed;
    use super::*;

    #[test]
    fn density_switches_above_the_threshold() {
        let x: Vec<f64> = (0..20_001).map(|i| (i % 97) as f64).collect();
        let y: Vec<f64> = (0..20_001).map(|i| (i % 89) as f64).collect();
        assert!(matches!(
            cloud("d", &x[..20_000], &y[..20_000], 20_000),
            Layer::Points { .. }
        ));
        match cloud("d", &x, &y, 20_000) {
            Layer::Density { density, .. } => {
                assert_eq!(density.points, 20_001);
                assert_eq!(density.counts.iter().sum::<u32>(), 20_001);
            }
            other => panic!("expected a density, got {other:?}"),
        }
    }

    #[test]
    fn density_counts_by_hand() {
        // 4 x 1 cells over [0, 4]: 0 and 0.5 in cell 0, 2 in cell 2, 4 (upper edge) in cell 3.
        let d = Density::of(&[0.0, 0.5, 2.0, 4.0], &[1.0; 4], 4, 1);
        assert_eq!(d.counts, vec![2, 0, 1, 1]);
        assert_eq!(d.x_edges, vec![0.0, 1.0, 2.0, 3.0, 4.0]);
    }

    #[test]
    fn histogram_by_hand() {
        // Values 0..=9: nice edges 0, 2, ..., 10 for about 5 bins (step nice(2.5) = 2);
        // the last bin [8, 10] holds 8 and 9.
        let v: Vec<f64> = (0..10).map(f64::from).collect();
        let h = Histogram::of(&v, 5);
        assert_eq!(h.edges, vec![0.0, 2.0, 4.0, 6.0, 8.0, 10.0]);
        assert_eq!(h.counts, vec![2, 2, 2, 2, 2]);
    }

    #[test]
    fn plots_are_well_formed_and_escaped() {
        let evil = "<script>x</script>";
        let x = [0.0, 1.0, 2.0];
        let p = Plot::new(evil, evil, evil)
            .with(Layer::Band {
                name: evil.into(),
                x: x.to_vec(),
                lower: vec![0.0, f64::NAN, 1.0],
                upper: vec![1.0, 2.0, 3.0],
                colour: "#000000".into(),
            })
            .with(line(evil, &x, &[1.0, f64::NAN, 2.0], 1))
            .with(cloud(evil, &x, &x, 1))
            .with(Layer::Markers {
                name: evil.into(),
                x: x.to_vec(),
                y: vec![1.0, f64::NAN, 2.0],
                colour: "#000000".into(),
                radius: 3.0,
                labels: vec![evil.into(); 3],
            })
            .with(Histogram::of(&x, 3).layer(evil, 2));
        let svg = p.svg();
        assert!(!svg.contains("<script"));
        let seen = well_formed(&svg).unwrap();
        assert!(seen.contains(&"path".to_string()) && seen.contains(&"rect".to_string()));
        // Markers: 2 finite points, each a circle and a label (the NaN one skipped).
        assert_eq!(svg.matches("r=\"3\"").count(), 2);
        assert!(svg.matches("&lt;script&gt;x&lt;/script&gt;</text>").count() >= 2);
        let sm = small_multiples(evil, &[p.clone(), p], evil, 150.0);
        assert!(!sm.contains("<script"));
        well_formed(&sm).unwrap();
    }

    #[test]
    fn wrapping() {
        assert_eq!(wrap("a bb ccc", 4), vec!["a bb", "ccc"]);
    }
}
