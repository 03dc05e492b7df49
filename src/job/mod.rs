//! Orchestration: read → validate → compute → summarise → write, one module per command.

pub mod check;
pub mod config;
pub mod grid;
pub mod init;
pub mod log;
pub mod merge;
pub mod output;
pub mod partial;
pub mod period;
pub mod plan;
pub mod run;
pub mod summary;
pub mod templates;
pub mod uncertainty;
