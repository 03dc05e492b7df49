//! hazebook: clear-sky shortwave aerosol direct radiative effect from campaign workbooks.
//!
//! The library is the whole tool; the binary only parses arguments and maps the outcome to an
//! exit status. Layers:
//!
//! - [`physics`]: pure radiative transfer for one observation (no I/O).
//! - [`ingest`]: workbooks, csv and parquet into typed observations, every row accounted for.
//! - [`report`]: templates, statistics and the report workbook.
//! - [`job`]: orchestration of the commands; [`cli`]: the command-line types.
pub mod cli;
pub mod ingest;
pub mod job;
pub mod physics;
pub mod report;
