//! Command-line types (clap) and their translation into job plans.
//!
//! Exit status: 0 success; 1 success with rejected rows (report written, rows listed on the
//! Rejected sheet); 2 run failed and nothing was written (bad arguments, unreadable input,
//! missing column, bad job file, strict mode refusing an ignored column or a default).

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};

use crate::job;
use crate::physics::{Closure, Method};
use crate::report::SideFormat;

const EXIT_HELP: &str = "Exit status:
  0  success: every row computed and the report written
  1  success with rejected rows: report written, see its Rejected sheet
  2  failed: nothing written (bad arguments, unreadable input, missing column, bad job file,
     strict mode refusing an ignored column or a built-in default)";

const CHECK_EXIT_HELP: &str = "Exit status:
  0  every row would be computed
  1  some rows would be rejected (each is listed with its cell)
  2  the inputs cannot be read (bad arguments, unreadable input, missing column, bad job file)";

/// Clear-sky shortwave aerosol direct radiative effect from campaign workbooks.
///
/// Reads workbooks of aerosol optical depth, single-scattering albedo and asymmetry factor,
/// computes the aerosol direct radiative effect at the top of the atmosphere and at the surface
/// with a two-stream model (instantaneous and 24-hour mean), and writes a formatted report
/// workbook. Clear-sky, plane-parallel model for research use.
#[derive(Debug, Parser)]
#[command(name = "hazebook", version, after_help = EXIT_HELP)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Compute the report for a workbook (defaults and header detection) or a job file.
    ///
    /// Cost: reading, about 30 band × 13 geometry two-stream column solves per row on all
    /// cores, statistics, and writing the workbook.
    #[command(after_help = EXIT_HELP)]
    Run(RunArgs),
    /// Read and validate only: print the mapping, warnings and rejected rows with cells.
    ///
    /// Writes nothing. Cost: reading the inputs; no radiative transfer.
    #[command(after_help = CHECK_EXIT_HELP)]
    Check(CheckArgs),
    /// Write a commented job file (mapping and site values pre-filled from a workbook) and a
    /// template copy.
    ///
    /// With --from, what the workbook gives is written out and what it lacks is left as a
    /// commented placeholder to fill in. Cost: reading the workbook once.
    Init(InitArgs),
    /// List the built-in report templates, or print one.
    Templates(TemplatesArgs),
    /// Idealised sensitivity tables: DRE over lists of AOD, SSA, g, albedo and cos(zenith).
    Grid(GridArgs),
    /// One report from the partial results of runs partitioned by site or period.
    ///
    /// Reads the `.partial.json` files that `run --partial` writes, checks that they come from
    /// one hazebook version with the same settings and that no input row is in two of them,
    /// and recomputes every statistic from the rows. Cost: reading the bundles and writing the
    /// workbook; no radiative transfer.
    #[command(after_help = EXIT_HELP)]
    Merge(MergeArgs),
}

/// Options shared by `run` and `check`.
#[derive(Debug, Args, Clone)]
pub struct SelectArgs {
    /// A campaign workbook (xlsx, xlsm, xls, ods, csv, parquet) or a job file (.toml).
    pub input: PathBuf,
    /// Keep rows of one period: YYYY-MM, YYYY or previous-month.
    #[arg(long)]
    pub period: Option<String>,
    /// Reference date for previous-month and {date} (YYYY-MM-DD); default: today (UTC).
    #[arg(long, value_name = "YYYY-MM-DD")]
    pub today: Option<String>,
    /// Fail (exit 2, nothing written) when a column is not read without being listed in the
    /// job file's [input] ignore_columns, or a built-in default applies to a quantity not in
    /// [input] defaults_allowed. Same as [input] strict = true.
    #[arg(long)]
    pub strict: bool,
}

#[derive(Debug, Args, Clone)]
pub struct RunArgs {
    #[command(flatten)]
    pub select: SelectArgs,
    /// Report template: a built-in name (see `hazebook templates`) or a TOML file.
    #[arg(long)]
    pub template: Option<String>,
    /// Output folder (created if missing); default: the job file's setting, else `.`.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub outputs: OutputArgs,
    /// Print the time of each stage on stderr (`timing: <stage> <seconds> s`).
    #[arg(long)]
    pub timings: bool,
    /// Keep only the rows of these sites (repeat, or a comma list); rows of other sites are
    /// counted as outside the period. Without `{site}` in the output name, `-<site>` is added
    /// before its extension.
    #[arg(long = "site", value_name = "NAME", value_delimiter = ',')]
    pub sites: Vec<String>,
    /// Also write the partial results beside the report (`<report stem>.partial.json`), for
    /// `hazebook merge`.
    #[arg(long)]
    pub partial: bool,
}

#[derive(Debug, Args, Clone)]
pub struct MergeArgs {
    /// Partial-results files written by `run --partial` (a shell glob such as
    /// `parts/*.partial.json` works).
    #[arg(required = true, value_name = "PARTIAL.json")]
    pub bundles: Vec<PathBuf>,
    /// Output folder (created if missing); default `.`.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Report template: a built-in name or a TOML file; default: the template of the runs
    /// when they agree, else `full`.
    #[arg(long)]
    pub template: Option<String>,
    /// Job name in the report and in `{job}`; default: that of the first bundle.
    #[arg(long)]
    pub name: Option<String>,
    /// Output name with `{job}`, `{period}`, `{date}`; default `{job}-merged-report.xlsx`.
    #[arg(long, value_name = "PATTERN")]
    pub output: Option<String>,
    #[command(flatten)]
    pub outputs: OutputArgs,
    /// Date for `{date}` (YYYY-MM-DD); default: today (UTC).
    #[arg(long, value_name = "YYYY-MM-DD")]
    pub today: Option<String>,
}

/// Side outputs and messages, shared by `run` and `merge`.
#[derive(Debug, Args, Clone)]
pub struct OutputArgs {
    /// Also write the results at full precision as csv (units in the column names), parquet,
    /// or CF-1.8 NetCDF (`.nc` with every row, `.summary.nc` with the site × month statistics).
    #[arg(long, value_enum)]
    pub side_output: Option<SideOutputArg>,
    /// Append log lines to this file (timestamps, counts, outputs, problems).
    #[arg(long, value_name = "FILE")]
    pub log: Option<PathBuf>,
    /// Only errors on stderr; no progress bar.
    #[arg(long, short)]
    pub quiet: bool,
}

#[derive(Debug, Clone, Copy, clap::ValueEnum)]
pub enum SideOutputArg {
    Csv,
    Parquet,
    Netcdf,
}

impl From<SideOutputArg> for SideFormat {
    fn from(v: SideOutputArg) -> Self {
        match v {
            SideOutputArg::Csv => SideFormat::Csv,
            SideOutputArg::Parquet => SideFormat::Parquet,
            SideOutputArg::Netcdf => SideFormat::Netcdf,
        }
    }
}

#[derive(Debug, Args, Clone)]
pub struct CheckArgs {
    #[command(flatten)]
    pub select: SelectArgs,
    /// Print one JSON document (mapping, counts, warnings, rejected rows) on stdout.
    #[arg(long)]
    pub json: bool,
}

#[derive(Debug, Args, Clone)]
pub struct InitArgs {
    /// Folder to write `job.toml` and `report-template.toml` into (created if missing).
    #[arg(default_value = ".")]
    pub dir: PathBuf,
    /// A workbook whose detected mapping pre-fills the job file.
    #[arg(long, value_name = "WORKBOOK")]
    pub from: Option<PathBuf>,
    /// Overwrite existing files.
    #[arg(long)]
    pub force: bool,
}

#[derive(Debug, Args, Clone)]
pub struct TemplatesArgs {
    /// Print this template's TOML text.
    pub name: Option<String>,
}

#[derive(Debug, Args, Clone)]
pub struct GridArgs {
    /// AOD at the reference wavelength, comma-separated.
    #[arg(long, value_delimiter = ',', default_value = "0.1,0.3,0.5,1.0")]
    pub aod: Vec<f64>,
    /// Single-scattering albedo values.
    #[arg(long, value_delimiter = ',', default_value = "0.8,0.9,0.95,1.0")]
    pub ssa: Vec<f64>,
    /// Asymmetry factor values.
    #[arg(long, value_delimiter = ',', default_value = "0.7")]
    pub g: Vec<f64>,
    /// Surface albedo values.
    #[arg(long, value_delimiter = ',', default_value = "0.05,0.2")]
    pub albedo: Vec<f64>,
    /// cos(solar zenith) values for instantaneous cases [default: 0.25,0.5,0.75,1.0 unless
    /// --latitude and --date give 24-hour means].
    #[arg(long, value_delimiter = ',', conflicts_with_all = ["latitude", "date"])]
    pub mu0: Vec<f64>,
    /// Latitudes [deg] for 24-hour means (with --date).
    #[arg(long, value_delimiter = ',', allow_hyphen_values = true)]
    pub latitude: Vec<f64>,
    /// Dates (YYYY-MM-DD) for 24-hour means (with --latitude).
    #[arg(long, value_delimiter = ',')]
    pub date: Vec<String>,
    /// Reference wavelength of AOD, SSA and g [nm]; the single band sits here.
    #[arg(long, default_value_t = 550.0)]
    pub wavelength: f64,
    /// Ångström exponent (matters only with --spectral).
    #[arg(long, default_value_t = 1.3)]
    pub angstrom: f64,
    /// Use the full solar spectrum in bands instead of one band at the reference wavelength.
    #[arg(long)]
    pub spectral: bool,
    /// Switch molecular (Rayleigh) scattering on.
    #[arg(long)]
    pub rayleigh: bool,
    /// Switch gas absorption on (300 DU ozone, 1.5 cm water unless given).
    #[arg(long)]
    pub gases: bool,
    /// Ozone column [DU] (used with --gases).
    #[arg(long, default_value_t = 300.0)]
    pub ozone_du: f64,
    /// Precipitable water [cm] (used with --gases).
    #[arg(long, default_value_t = 1.5)]
    pub water_cm: f64,
    /// Surface pressure [hPa].
    #[arg(long, default_value_t = 1013.25)]
    pub pressure_hpa: f64,
    /// Two-stream closure.
    #[arg(long, value_enum, default_value = "delta-eddington")]
    pub closure: ClosureArg,
    /// Flux solver: the two-stream closure of --closure, or discrete ordinates (delta-M)
    /// with --streams streams.
    #[arg(long, value_enum, default_value = "two-stream")]
    pub solver: SolverArg,
    /// Streams of the discrete-ordinate solver (even, 2–64).
    #[arg(long, default_value_t = crate::physics::DEFAULT_STREAMS)]
    pub streams: usize,
    /// A purely molecular layer (Rayleigh phase function, no absorption) of this optical
    /// depth above the aerosol layer, which then holds no molecules (single band only;
    /// instead of --rayleigh).
    #[arg(long, conflicts_with_all = ["rayleigh", "spectral"])]
    pub rayleigh_above: Option<f64>,
    /// Solar constant [W m⁻²].
    #[arg(long, default_value_t = 1361.0)]
    pub solar_constant: f64,
    /// Output file: .csv (full precision) or .xlsx; `-` prints csv on stdout.
    #[arg(long, default_value = "-")]
    pub out: PathBuf,
}

#[derive(Debug, Clone, Copy, clap::ValueEnum)]
pub enum ClosureArg {
    DeltaEddington,
    Eddington,
    Quadrature,
    HemisphericMean,
    Pifm,
}

impl From<ClosureArg> for Closure {
    fn from(c: ClosureArg) -> Self {
        match c {
            ClosureArg::DeltaEddington => Closure::DeltaEddington,
            ClosureArg::Eddington => Closure::Eddington,
            ClosureArg::Quadrature => Closure::Quadrature,
            ClosureArg::HemisphericMean => Closure::HemisphericMean,
            ClosureArg::Pifm => Closure::Pifm,
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum SolverArg {
    TwoStream,
    DiscreteOrdinates,
}

impl From<SolverArg> for Method {
    fn from(s: SolverArg) -> Self {
        match s {
            SolverArg::TwoStream => Method::TwoStream,
            SolverArg::DiscreteOrdinates => Method::DiscreteOrdinates,
        }
    }
}

/// How a command ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Status {
    Success,
    SuccessWithRejected,
    Failed,
}

impl Status {
    pub fn code(self) -> u8 {
        match self {
            Status::Success => 0,
            Status::SuccessWithRejected => 1,
            Status::Failed => 2,
        }
    }
}

/// Run one command.
pub fn run(cli: Cli) -> anyhow::Result<Status> {
    match cli.command {
        Command::Run(a) => job::run::run(&a),
        Command::Check(a) => job::check::check(&a),
        Command::Init(a) => job::init::init(&a),
        Command::Templates(a) => job::templates::templates(&a),
        Command::Grid(a) => job::grid::grid(&a),
        Command::Merge(a) => job::merge::merge(&a),
    }
}
