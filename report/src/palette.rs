//! Colours: a colour-blind-safe qualitative palette for series and perceptually ordered ramps
//! for values.
//!
//! - Series: the Okabe & Ito (2008) palette ("Color universal design"), the values of R's
//!   `palette.colors(palette = "Okabe-Ito")`, reordered so the first colours contrast most on
//!   white; the yellow is left out (too light for thin lines on white).
//! - Sequential ramp (counts, densities, responses): R's `hcl.colors(9, "viridis")`, an HCL
//!   rendering of viridis with monotone luminance (Zeileis et al. 2020, J. Stat. Softw. 96(1)).
//! - Diverging ramp (residuals, correlations in [-1, 1]): R's `hcl.colors(11, "Blue-Red 3")`,
//!   blue below the centre, red above, light grey at it.
//!
//! - Grey ramp (the density of many points behind curves): light to dark grey.
//!
//! Between anchors colours are interpolated linearly in sRGB.

/// Series colours (Okabe & Ito 2008) in the order series take them.
pub const SERIES: [&str; 7] = [
    "#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000",
];

/// Neutral grey (Okabe & Ito 2008) for data points and context.
pub const GREY: &str = "#999999";

/// Anchors of the sequential ramp, low to high.
pub const SEQUENTIAL: [&str; 9] = [
    "#4B0055", "#403173", "#00588B", "#007B97", "#009B95", "#00B785", "#53CC67", "#B2DC3C",
    "#FDE333",
];

/// Anchors of the diverging ramp, low (blue) to high (red).
pub const DIVERGING: [&str; 11] = [
    "#002F70", "#265BAB", "#6889D0", "#A3B4E5", "#D3DBF4", "#F6F6F6", "#F7D3D3", "#E6A4A4",
    "#CB6F70", "#9D3D3D", "#5F1415",
];

/// The series colour number `i` (cycling).
pub fn series(i: usize) -> &'static str {
    SERIES[i % SERIES.len()]
}

/// Anchors of the grey ramp of binned densities, light to dark (luminance monotone), so
/// curves drawn over a density stay readable.
pub const GREYS: [&str; 2] = ["#EBEBEB", "#5A5A5A"];

/// Which ramp a value-coloured figure uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Ramp {
    /// Low to high: counts, levels.
    Sequential,
    /// Around a centre: residuals, correlations.
    Diverging,
    /// Light to dark grey: the background density of many points.
    Grey,
}

fn rgb(hex: &str) -> [f64; 3] {
    let v = u32::from_str_radix(hex.trim_start_matches('#'), 16).unwrap_or(0);
    [
        f64::from((v >> 16) & 0xff),
        f64::from((v >> 8) & 0xff),
        f64::from(v & 0xff),
    ]
}

/// The colour at position `u` in [0, 1] of a ramp (clamped; NaN gives light grey).
///
/// # Examples
/// ```
/// use trajweave_report::palette::{ramp, Ramp};
/// assert_eq!(ramp(Ramp::Diverging, 0.5), "#f6f6f6");
/// assert_eq!(ramp(Ramp::Sequential, 0.0), "#4b0055");
/// ```
pub fn ramp(kind: Ramp, u: f64) -> String {
    if u.is_nan() {
        return "#eeeeee".into();
    }
    let anchors: &[&str] = match kind {
        Ramp::Sequential => &SEQUENTIAL,
        Ramp::Diverging => &DIVERGING,
        Ramp::Grey => &GREYS,
    };
    let pos = u.clamp(0.0, 1.0) * (anchors.len() - 1) as f64;
    let j = (pos.floor() as usize).min(anchors.len() - 2);
    let f = pos - j as f64;
    let (a, b) = (rgb(anchors[j]), rgb(anchors[j + 1]));
    let c: Vec<u8> = (0..3)
        .map(|k| (a[k] + (b[k] - a[k]) * f).round() as u8)
        .collect();
    format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ramps_hit_their_anchors() {
        // The anchors are R's hcl.colors values (grDevices 4.2.2), reproduced at their positions.
        assert_eq!(ramp(Ramp::Sequential, 1.0), "#fde333");
        assert_eq!(ramp(Ramp::Sequential, 0.5), "#009b95");
        assert_eq!(ramp(Ramp::Diverging, 0.0), "#002f70");
        assert_eq!(ramp(Ramp::Diverging, 2.0), "#5f1415");
        // Half way between #F6F6F6 and #F7D3D3: (246+247)/2 = 246.5 -> 247, (246+211)/2 = 228.5 -> 229.
        assert_eq!(ramp(Ramp::Diverging, 0.55), "#f7e5e5");
        assert_eq!(ramp(Ramp::Sequential, f64::NAN), "#eeeeee");
        // (235 + 90) / 2 = 162.5 -> 163 = 0xa3.
        assert_eq!(ramp(Ramp::Grey, 0.5), "#a3a3a3");
    }
}
