//! `simulate_panel()`: core options set one by one by name, the simulated columns as a
//! data.frame.

use extendr_api::prelude::*;
use trajweave_core::data::simulate::SIMULATE_OPTION_NAMES;
use trajweave_core::{simulate, SimulateOptions, SimulatedPanel, SIMULATED_COLUMNS};

use crate::convert::{data_frame, list_values, strings, value_text};
use crate::error::{invalid_option, respond, Failure, Outcome};

/// Simulates a panel. `names` and `values` are the options in the order given; each goes
/// through the core's `SimulateOptions::set`, so names and ranges are checked there.
#[extendr]
fn tw_simulate(names: Robj, values: Robj) -> Robj {
    respond(run(&names, &values))
}

fn run(names: &Robj, values: &Robj) -> Outcome {
    let names = strings(names, "simulate option")?;
    let values = list_values(values, "simulate option")?;
    let mut options = SimulateOptions::default();
    for (name, value) in names.iter().zip(&values) {
        let name = name.as_deref().unwrap_or("");
        let number = match option_number(value) {
            Some(x) => x,
            // An unknown name is the more useful error; the core words it.
            None if !SIMULATE_OPTION_NAMES.contains(&name) => f64::NAN,
            None => return Err(invalid_option(name, value_text(value), "give one number")),
        };
        options.set(name, number)?;
    }
    let data = simulate(&options)?;
    let columns = SIMULATED_COLUMNS
        .iter()
        .map(|name| column(&data, name))
        .collect::<Result<Vec<_>, _>>()?;
    data_frame(
        SIMULATED_COLUMNS.iter().copied(),
        columns,
        data.patient.len(),
    )
}

/// One number from a length-one numeric or integer vector (`NA` as NaN).
fn option_number(x: &Robj) -> Option<f64> {
    if x.len() != 1 || x.class().is_some() {
        return None;
    }
    match x.rtype() {
        Rtype::Doubles => x.as_real_slice()?.first().copied(),
        Rtype::Integers => x.as_integer_slice()?.first().map(|&i| {
            if i == i32::MIN {
                f64::NAN
            } else {
                f64::from(i)
            }
        }),
        _ => None,
    }
}

/// A simulated column by its name in `SIMULATED_COLUMNS`; patient ids as doubles.
fn column(data: &SimulatedPanel, name: &str) -> Result<Robj, Failure> {
    let values: &[f64] = match name {
        "patient" => {
            return Ok(data
                .patient
                .iter()
                .map(|&p| p as f64)
                .collect::<Vec<_>>()
                .into())
        }
        "years" => &data.years,
        "egfr" => &data.egfr,
        "age" => &data.age,
        "female" => &data.female,
        "diabetes" => &data.diabetes,
        "acr" => &data.acr,
        other => return Err(Failure::Internal(format!("no simulated column {other:?}"))),
    };
    Ok(values.into())
}

extendr_module! {
    mod simulate;
    fn tw_simulate;
}
