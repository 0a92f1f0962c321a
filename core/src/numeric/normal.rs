//! The standard normal quantile function, by Wichura's algorithm AS 241 (Applied Statistics
//! 37:477-484, 1988; the PPND16 version, accurate to about 1 part in 10^16): rational
//! approximations in three regions of p. Used for the level of normal-theory intervals.
//! The coefficients are the published ones, as printed (hence the allowance below).
#![allow(clippy::excessive_precision)]

/// Evaluates the polynomial with coefficients `c` (constant first) at `x` by Horner's rule.
fn poly(c: &[f64; 8], x: f64) -> f64 {
    c.iter().rev().fold(0.0, |acc, &k| acc * x + k)
}

const A: [f64; 8] = [
    3.387_132_872_796_366_6,
    1.331_416_678_917_843_8e2,
    1.971_590_950_306_551_4e3,
    1.373_169_376_550_946_1e4,
    4.592_195_393_154_987_1e4,
    6.726_577_092_700_870_1e4,
    3.343_057_558_358_812_8e4,
    2.509_080_928_730_122_7e3,
];
const B: [f64; 8] = [
    1.0,
    4.231_333_070_160_091_1e1,
    6.871_870_074_920_579e2,
    5.394_196_021_424_751e3,
    2.121_379_430_158_659_6e4,
    3.930_789_580_009_271e4,
    2.872_908_573_572_194_3e4,
    5.226_495_278_852_854e3,
];
const C: [f64; 8] = [
    1.423_437_110_749_683_6,
    4.630_337_846_156_545,
    5.769_497_221_460_691,
    3.647_848_324_763_204_6,
    1.270_458_252_452_368_4,
    2.417_807_251_774_506e-1,
    2.272_384_498_926_918_4e-2,
    7.745_450_142_783_414e-4,
];
const D: [f64; 8] = [
    1.0,
    2.053_191_626_637_758_8,
    1.676_384_830_183_803_8,
    6.897_673_349_851e-1,
    1.481_039_764_274_800_8e-1,
    1.519_866_656_361_645_7e-2,
    5.475_938_084_995_345e-4,
    1.050_750_071_644_416_8e-9,
];
const E: [f64; 8] = [
    6.657_904_643_501_103,
    5.463_784_911_164_114,
    1.784_826_539_917_291_3,
    2.965_605_718_285_048_7e-1,
    2.653_218_952_657_612_3e-2,
    1.242_660_947_388_078_4e-3,
    2.711_555_568_743_487_6e-5,
    2.010_334_399_292_288_1e-7,
];
const F: [f64; 8] = [
    1.0,
    5.998_322_065_558_879e-1,
    1.369_298_809_227_358e-1,
    1.487_536_129_085_061_5e-2,
    7.868_691_311_456_133e-4,
    1.846_318_317_510_054_8e-5,
    1.421_511_758_316_445_9e-7,
    2.044_263_103_389_939_8e-15,
];

/// The p-quantile of the standard normal distribution, for 0 < p < 1 (NaN outside).
///
/// # Examples
/// ```
/// use trajweave_core::numeric::normal::normal_quantile;
/// assert!((normal_quantile(0.975) - 1.959_963_984_540_054).abs() < 1e-15);
/// assert_eq!(normal_quantile(0.5), 0.0);
/// ```
pub fn normal_quantile(p: f64) -> f64 {
    if !(p > 0.0 && p < 1.0) {
        return f64::NAN;
    }
    let q = p - 0.5;
    if q.abs() <= 0.425 {
        let r = 0.180_625 - q * q;
        return q * poly(&A, r) / poly(&B, r);
    }
    let tail = if q < 0.0 { p } else { 1.0 - p };
    let r = (-tail.ln()).sqrt();
    let z = if r <= 5.0 {
        poly(&C, r - 1.6) / poly(&D, r - 1.6)
    } else {
        poly(&E, r - 5.0) / poly(&F, r - 5.0)
    };
    if q < 0.0 {
        -z
    } else {
        z
    }
}

#[cfg(test)]
mod tests {
    use super::normal_quantile;

    #[test]
    fn matches_published_values() {
        // Expected values printed by scipy.stats.norm.ppf (scipy 1.17.1).
        assert!((normal_quantile(0.95) - 1.644_853_626_951_472_2).abs() < 1e-15);
        assert!((normal_quantile(0.025) + 1.959_963_984_540_054).abs() < 1e-15);
        assert!((normal_quantile(1e-10) + 6.361_340_902_404_056).abs() < 1e-13);
        assert!(normal_quantile(0.0).is_nan() && normal_quantile(1.0).is_nan());
    }
}
