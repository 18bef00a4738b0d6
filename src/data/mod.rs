//! Loading the sample: one numeric column of a CSV file, checked cell by cell, and its
//! summary and standardisation.

mod load;
mod standardise;

pub use load::{load_column, load_column_from_reader, Sample};
pub use standardise::{DataSummary, Standardised};
