//! Loading the sample: one numeric column of a CSV file, checked cell by cell, the optional
//! transform it is fitted on, its summary and standardisation, and the cells it stands for
//! when it was recorded at a resolution, and how it was recorded (lattice, heaping).

mod cells;
mod digest;
mod lattice;
mod load;
mod standardise;
pub mod subsample;
mod tally;
mod transform;

pub use cells::{distinct_counted, Cells};
pub use digest::HashingReader;
pub use lattice::{Heaping, Lattice, Recording};
pub use load::{
    load_column, load_column_from_reader, load_weighted, load_weighted_from_reader, scan_rows, Row,
    Sample, Scan,
};
pub use standardise::{DataSummary, Standardised};
pub use tally::Tally;
pub use transform::{Bounds, SupportCheck, Transform, TransformKind};
