//! One type for "a smoother with its settings", so `mean_curve`, `tune_smoother` and the
//! fronts handle every family the same way. Each family's options and algorithm live in its
//! own module; this one only dispatches.

use serde::Serialize;

use crate::error::{Error, Result};
use crate::trend::curve::{Curve, OptionValue};
use crate::trend::kernel::{kernel_smooth, KernelOptions};
use crate::trend::lowess::{lowess, LowessOptions};
use crate::trend::spline::{smoothing_spline, Penalty, SplineOptions};
use crate::trend::supsmu::{super_smoother, SuperSmootherOptions};

/// A smoother family with its settings.
///
/// # Examples
/// ```
/// use trajweave_core::trend::curve::OptionValue;
/// use trajweave_core::trend::smoother::Smoother;
/// # fn main() -> trajweave_core::Result<()> {
/// let s = Smoother::from_options("kernel", &[("bandwidth".into(), OptionValue::Number(0.5))])?;
/// let c = s.fit(&[0.0, 1.0, 2.0, 3.0], &[1.0, 2.0, 3.0, 4.0])?;
/// assert_eq!(c.method, "kernel");
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "family", content = "options", rename_all = "lowercase")]
#[non_exhaustive]
pub enum Smoother {
    /// LOWESS.
    Lowess(LowessOptions),
    /// Nadaraya-Watson or local-linear kernel smoother.
    Kernel(KernelOptions),
    /// Cubic smoothing spline.
    Spline(SplineOptions),
    /// Friedman's super smoother.
    Super(SuperSmootherOptions),
}

/// The family names, as every front spells them.
pub const FAMILIES: &str = "\"lowess\", \"kernel\", \"spline\" or \"super\"";

impl Smoother {
    /// A smoother of `family` with the defaults of that family.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for an unknown family.
    pub fn new(family: &str) -> Result<Smoother> {
        match family {
            "lowess" => Ok(Smoother::Lowess(LowessOptions::default())),
            "kernel" => Ok(Smoother::Kernel(KernelOptions::default())),
            "spline" => Ok(Smoother::Spline(SplineOptions::default())),
            "super" => Ok(Smoother::Super(SuperSmootherOptions::default())),
            other => Err(Error::option(
                "smoother",
                format!("{other:?}"),
                &format!("use {FAMILIES}"),
            )),
        }
    }

    /// A smoother of `family` with options set by name, in order.
    ///
    /// # Errors
    /// Those of [`Smoother::new`] and of the family's `set`.
    pub fn from_options(family: &str, options: &[(String, OptionValue)]) -> Result<Smoother> {
        let mut s = Smoother::new(family)?;
        for (name, value) in options {
            s.set(name, value)?;
        }
        Ok(s)
    }

    /// Sets one option by name.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for an unknown name or a value out of range.
    pub fn set(&mut self, name: &str, value: &OptionValue) -> Result<()> {
        match self {
            Smoother::Lowess(o) => o.set(name, value),
            Smoother::Kernel(o) => o.set(name, value),
            Smoother::Spline(o) => o.set(name, value),
            Smoother::Super(o) => o.set(name, value),
        }
    }

    /// The family's name.
    pub fn family(&self) -> &'static str {
        match self {
            Smoother::Lowess(_) => "lowess",
            Smoother::Kernel(_) => "kernel",
            Smoother::Spline(_) => "spline",
            Smoother::Super(_) => "super",
        }
    }

    /// The parameter `tune_smoother` varies by default.
    pub fn main_parameter(&self) -> &'static str {
        match self {
            Smoother::Lowess(_) | Smoother::Super(_) => "span",
            Smoother::Kernel(_) => "bandwidth",
            Smoother::Spline(_) => "df",
        }
    }

    /// The smoother with the defaults that depend on the response fixed for response `y`:
    /// LOWESS robustness iterations left unset become the number a fit to `y` runs (0 on a
    /// binary response, else 3). Resampling estimators fit every replicate with this, so a
    /// replicate that happens to hold fewer distinct responses runs the same method as the
    /// fit to all the data.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::trend::smoother::Smoother;
    /// # fn main() -> trajweave_core::Result<()> {
    /// let s = Smoother::new("lowess")?.for_response(&[0.0, 1.0, 1.0]);
    /// assert_eq!(serde_json::to_value(&s).unwrap()["options"]["iterations"], 0);
    /// # Ok(()) }
    /// ```
    pub fn for_response(&self, y: &[f64]) -> Smoother {
        match self {
            Smoother::Lowess(o) => Smoother::Lowess(LowessOptions {
                iterations: Some(o.iterations_for(y)),
                ..o.clone()
            }),
            other => other.clone(),
        }
    }

    /// The smoother with every choice the fit `fit` (of response `y`) made from the data fixed
    /// at the value it made: LOWESS iterations as in [`Smoother::for_response`], a kernel's
    /// rule-of-thumb bandwidth at the bandwidth used, a spline's GCV penalty at the penalty
    /// chosen. Options the user set, and the super smoother's point-by-point span, are kept.
    /// Resampling estimators that hold the amount of smoothing fixed refit with this.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::trend::smoother::Smoother;
    /// # fn main() -> trajweave_core::Result<()> {
    /// let (x, y) = ([0.0, 1.0, 2.0, 3.0, 4.0], [1.0, 3.0, 2.0, 5.0, 4.0]);
    /// let s = Smoother::new("kernel")?;
    /// let fit = s.fit(&x, &y)?;
    /// let fixed = s.as_fitted(&y, &fit);
    /// assert_eq!(serde_json::to_value(&fixed).unwrap()["options"]["bandwidth"], fit.diagnostics.bandwidth.unwrap());
    /// # Ok(()) }
    /// ```
    pub fn as_fitted(&self, y: &[f64], fit: &Curve) -> Smoother {
        match self.for_response(y) {
            Smoother::Kernel(o) if o.bandwidth.is_none() => Smoother::Kernel(KernelOptions {
                bandwidth: fit.diagnostics.bandwidth,
                ..o
            }),
            Smoother::Spline(o) if o.penalty == Penalty::Gcv => match fit.diagnostics.lambda {
                Some(l) if l.is_finite() && l > 0.0 => Smoother::Spline(SplineOptions {
                    penalty: Penalty::Lambda(l),
                }),
                _ => Smoother::Spline(o),
            },
            other => other,
        }
    }

    /// Fits y on x.
    ///
    /// # Errors
    /// Those of the family's fit function.
    pub fn fit(&self, x: &[f64], y: &[f64]) -> Result<Curve> {
        match self {
            Smoother::Lowess(o) => lowess(x, y, o),
            Smoother::Kernel(o) => kernel_smooth(x, y, o),
            Smoother::Spline(o) => smoothing_spline(x, y, o),
            Smoother::Super(o) => super_smoother(x, y, o),
        }
    }
}
