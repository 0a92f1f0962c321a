//! A heat map: a grid of cells coloured by value on a sequential or diverging ramp, with a
//! colour key, optional cell text (value and count) and row labels when the rows are few
//! enough to read.

use super::chart::{rect, SMALL_FONT};
use super::palette::{ramp, Ramp};
use super::scale::format_fixed;
use super::svg::{num, Svg};

/// Rows at most for which row labels are written.
pub const MAX_LABELLED_ROWS: usize = 40;

/// A heat map's content.
#[derive(Debug, Clone, PartialEq)]
pub struct HeatMap {
    /// Title above the map.
    pub title: String,
    /// Title of the columns' axis, with units.
    pub x_title: String,
    /// Title of the rows' axis.
    pub y_title: String,
    /// One label per column.
    pub columns: Vec<String>,
    /// One label per row, top to bottom.
    pub rows: Vec<String>,
    /// Row-major values; NaN is an empty cell (drawn light grey).
    pub values: Vec<f64>,
    /// Row-major counts behind each value, written in the cell with `cell_text`.
    pub counts: Option<Vec<u64>>,
    /// The colour ramp.
    pub ramp: Ramp,
    /// The values at the ramp's ends (e.g. (-1, 1) for correlations).
    pub domain: (f64, f64),
    /// Write the value (and count) in each cell.
    pub cell_text: bool,
    /// Title of the colour key, with units.
    pub key_title: String,
}

impl HeatMap {
    /// The heat map as an SVG document.
    ///
    /// # Examples
    /// ```
    /// use trajweave_report::heatmap::HeatMap;
    /// use trajweave_report::palette::Ramp;
    /// let h = HeatMap {
    ///     title: "r".into(), x_title: "lag".into(), y_title: "".into(),
    ///     columns: vec!["a".into(), "b".into()], rows: vec!["1".into()],
    ///     values: vec![-0.5, 0.9], counts: Some(vec![10, 12]), ramp: Ramp::Diverging,
    ///     domain: (-1.0, 1.0), cell_text: true, key_title: "correlation".into(),
    /// };
    /// assert!(h.svg().contains(">0.90<"));
    /// ```
    pub fn svg(&self) -> String {
        let (nr, nc) = (self.rows.len().max(1), self.columns.len().max(1));
        let labelled = self.rows.len() <= MAX_LABELLED_ROWS;
        let cell_h = if self.cell_text {
            30.0
        } else {
            (520.0 / nr as f64).clamp(1.0, 22.0)
        };
        let left = if labelled { 120.0 } else { 40.0 };
        let (top, key_w) = (40.0, 120.0);
        let cell_w = ((600.0 - left) / nc as f64).clamp(20.0, 90.0);
        let (map_w, map_h) = (cell_w * nc as f64, cell_h * nr as f64);
        let width = left + map_w + 24.0 + key_w;
        let height = top + map_h + 70.0;
        let mut s = Svg::new(width, height, &self.title);
        s.text(
            8.0,
            20.0,
            &[("font-size", "14"), ("font-weight", "bold")],
            &self.title,
        );
        let (d0, d1) = self.domain;
        let pos = |v: f64| {
            if d1 > d0 {
                (v - d0) / (d1 - d0)
            } else {
                0.5
            }
        };
        let small = num(SMALL_FONT);
        for r in 0..self.rows.len() {
            for c in 0..self.columns.len() {
                let k = r * self.columns.len() + c;
                let v = self.values.get(k).copied().unwrap_or(f64::NAN);
                let (x, y) = (left + c as f64 * cell_w, top + r as f64 * cell_h);
                let colour = ramp(self.ramp, pos(v));
                // Overlap by a quarter pixel so thin rows show no seams.
                rect(&mut s, x, y, cell_w + 0.25, cell_h + 0.25, Some(&colour));
                if self.cell_text {
                    self.cell_label(&mut s, x + cell_w / 2.0, y, cell_h, v, k, pos(v));
                }
            }
        }
        s.open("g", &[("font-size", &small), ("fill", "#333333")]);
        if labelled {
            for (r, label) in self.rows.iter().enumerate() {
                let y = top + (r as f64 + 0.5) * cell_h + 4.0;
                s.text(left - 4.0, y, &[("text-anchor", "end")], label);
            }
        }
        let step = (nc / 12).max(1);
        for (c, label) in self.columns.iter().enumerate().step_by(step) {
            let x = left + (c as f64 + 0.5) * cell_w;
            s.text(x, top + map_h + 14.0, &[("text-anchor", "middle")], label);
        }
        s.close();
        s.text(
            left + map_w / 2.0,
            top + map_h + 36.0,
            &[("text-anchor", "middle")],
            &self.x_title,
        );
        let (yx, yy) = (14.0, top + map_h / 2.0);
        let rot = format!("rotate(-90 {} {})", num(yx), num(yy));
        s.text(
            yx,
            yy,
            &[("text-anchor", "middle"), ("transform", &rot)],
            &self.y_title,
        );
        self.key(&mut s, left + map_w + 24.0, top, map_h.clamp(120.0, 300.0));
        s.finish()
    }

    #[allow(clippy::too_many_arguments)]
    fn cell_label(&self, s: &mut Svg, x: f64, y: f64, h: f64, v: f64, k: usize, u: f64) {
        // Dark text on light cells, white on dark ones (the ramps' ends are dark).
        let dark_cell = match self.ramp {
            Ramp::Sequential => u < 0.55,
            Ramp::Diverging => !(0.2..=0.8).contains(&u),
            Ramp::Grey => u > 0.5,
        };
        let fill = if dark_cell { "#ffffff" } else { "#111111" };
        let small = num(SMALL_FONT);
        let text = if v.is_finite() {
            format_fixed(v, 2)
        } else {
            "-".into()
        };
        let attrs = [
            ("text-anchor", "middle"),
            ("fill", fill),
            ("font-size", small.as_str()),
        ];
        s.text(x, y + h / 2.0, &attrs, &text);
        if let Some(n) = self.counts.as_ref().and_then(|c| c.get(k)) {
            s.text(x, y + h / 2.0 + 12.0, &attrs, &format!("n={n}"));
        }
    }

    fn key(&self, s: &mut Svg, x: f64, y: f64, h: f64) {
        let steps = 24;
        for i in 0..steps {
            // Top of the key is the high end.
            let u = 1.0 - (i as f64 + 0.5) / steps as f64;
            let colour = ramp(self.ramp, u);
            let yi = y + 16.0 + h * i as f64 / steps as f64;
            rect(s, x, yi, 14.0, h / steps as f64 + 0.25, Some(&colour));
        }
        let small = num(SMALL_FONT);
        s.open("g", &[("font-size", &small)]);
        s.text(x, y + 8.0, &[], &self.key_title);
        let (d0, d1) = self.domain;
        let dec = if (d1 - d0).abs() >= 10.0 { 0 } else { 2 };
        for (frac, v) in [(0.0, d1), (0.5, (d0 + d1) / 2.0), (1.0, d0)] {
            s.text(
                x + 18.0,
                y + 16.0 + h * frac + 4.0,
                &[],
                &format_fixed(v, dec),
            );
        }
        s.close();
    }
}

#[cfg(test)]
mod tests {
    use super::super::svg::tests::well_formed;
    use super::*;

    fn map(rows: usize, cell_text: bool) -> HeatMap {
        HeatMap {
            title: "<b>t</b>".into(),
            x_title: "x & y".into(),
            y_title: "\"rows\"".into(),
            columns: vec!["<c1>".into(), "c2".into()],
            rows: (0..rows).map(|r| format!("<r{r}>")).collect(),
            values: (0..rows * 2)
                .map(|k| k as f64 / (rows * 2) as f64)
                .collect(),
            counts: Some((0..rows as u64 * 2).collect()),
            ramp: Ramp::Sequential,
            domain: (0.0, 1.0),
            cell_text,
            key_title: "value".into(),
        }
    }

    #[test]
    fn well_formed_escaped_and_labelled() {
        let svg = map(3, true).svg();
        well_formed(&svg).unwrap();
        assert!(!svg.contains("<b>") && !svg.contains("<r0>"));
        assert!(svg.contains("&lt;r2&gt;") && svg.contains("n=5"));
        // Many rows: no row labels, still one rect per cell (+ the key's 24).
        let many = map(300, false).svg();
        well_formed(&many).unwrap();
        assert!(!many.contains("&lt;r0&gt;"));
        assert_eq!(many.matches("<rect").count(), 600 + 24);
    }
}
