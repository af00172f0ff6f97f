//! The spread run as the readers need it: the report's run keeps, for every
//! quantity, its value on each board (the histograms).

use crate::document::Document;
pub use crate::spread::report::{unit_of, VariableUnit};
pub use crate::spread::{collect as variables, Options, SpreadReport};

/// A spread report and each quantity's values over the boards that solved.
pub type WithSamples = Result<(SpreadReport, Vec<(String, Vec<f64>)>), String>;

/// Run the spread analysis of `doc` keeping every board's outcome.
pub fn run_with_samples(doc: &Document, opts: &Options) -> WithSamples {
    let board = crate::spread::evaluate::Board::new(doc);
    let (rep, runs) = crate::spread::run_keeping_outcomes(doc, &board, opts)?;
    let samples = rep
        .quantities
        .iter()
        .map(|q| {
            let xs = runs
                .iter()
                .filter_map(|r| r.as_ref().ok())
                .filter_map(|o| o.values.iter().find(|(n, _)| *n == q.name).map(|(_, v)| *v))
                .collect();
            (q.name.clone(), xs)
        })
        .collect();
    Ok((rep, samples))
}
