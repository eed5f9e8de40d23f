//! Stage 1 — read an analyser export (Touchstone or CSV) and turn it into impedance.
//!
//! Readers turn bytes into a [`Sweep`] (frequencies + what the instrument measured, S at its
//! reference or Z directly); [`method`] turns a sweep into an [`ImpedanceSweep`] according to the
//! measurement set-up; [`fixture`] removes what the fixture adds. Nothing here prints.

pub mod convert;
pub mod csv_table;
pub mod fixture;
pub mod method;
pub mod sweep_file;
pub mod touchstone;
pub mod validate;

use crate::error::Diagnostic;
use crate::C64;
use sha2::{Digest, Sha256};
use std::path::{Path, PathBuf};

crate::stage_error!(
    /// Anything wrong while reading or converting a measurement file.
    IngestError
);

/// What the instrument measured at each frequency, before any set-up is applied.
#[derive(Debug, Clone, PartialEq)]
pub enum SweepData {
    /// Impedance given directly (a CSV of Z, or an already-normalised sweep), ohms.
    Impedance(Vec<C64>),
    /// One-port reflection coefficient at a real reference impedance.
    Reflection { s11: Vec<C64>, z0: f64 },
    /// Only the transmission coefficient S21 (a CSV export of S21), per-port references.
    Transmission { s21: Vec<C64>, z0: [f64; 2] },
    /// Full two-port S matrix per frequency, row-major [S11, S12, S21, S22], per-port references.
    TwoPort { s: Vec<[C64; 4]>, z0: [f64; 2] },
}

impl SweepData {
    pub fn len(&self) -> usize {
        match self {
            SweepData::Impedance(v) => v.len(),
            SweepData::Reflection { s11, .. } => s11.len(),
            SweepData::Transmission { s21, .. } => s21.len(),
            SweepData::TwoPort { s, .. } => s.len(),
        }
    }
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Short name for reports: "Z", "S11", "S21", "2-port S".
    pub fn describe(&self) -> &'static str {
        match self {
            SweepData::Impedance(_) => "Z",
            SweepData::Reflection { .. } => "S11",
            SweepData::Transmission { .. } => "S21",
            SweepData::TwoPort { .. } => "2-port S",
        }
    }
}

/// Where a sweep came from: enough to find and re-check the exact bytes later.
#[derive(Debug, Clone, PartialEq)]
pub struct SourceInfo {
    pub path: PathBuf,
    /// Lower-case hex SHA-256 of the file's bytes as read.
    pub sha256: String,
}

impl SourceInfo {
    pub fn from_bytes(path: &Path, bytes: &[u8]) -> Self {
        SourceInfo { path: path.to_path_buf(), sha256: sha256_hex(bytes) }
    }
    /// The file name without folders, as provenance records it.
    pub fn file_name(&self) -> String {
        self.path.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_default()
    }
}

/// A measurement as read: frequencies in Hz, strictly increasing, and the measured quantity.
#[derive(Debug, Clone, PartialEq)]
pub struct Sweep {
    pub source: SourceInfo,
    pub freq_hz: Vec<f64>,
    pub data: SweepData,
    /// What format detection chose, in words ("Touchstone v1, # MHZ S RI R 50", "CSV ';' ...").
    pub detected: Vec<String>,
    /// Things the user should know that did not stop the read (merged duplicate points, ...).
    pub warnings: Vec<String>,
}

/// The measurement set-up that turns S-parameters into the impedance of the part.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// One-port: Z = Z0(1+S11)/(1−S11).
    Reflection,
    /// Two-port, part in series between the ports: Z = 2√(Z01·Z02)/S21 − (Z01 + Z02) for
    /// power-wave S at real references (Touchstone), i.e. 2Z0(1 − S21)/S21 for equal ports.
    /// The (Zs + ZL)(1/S21 − 1) form holds for a voltage insertion ratio, not for Touchstone S21.
    Series,
    /// Two-port, part shunting the line to ground: Z = Z0·S21/(2(1−S21)).
    Shunt,
}

impl Method {
    pub fn name(self) -> &'static str {
        match self {
            Method::Reflection => "reflection",
            Method::Series => "series",
            Method::Shunt => "shunt",
        }
    }
    pub fn parse(s: &str) -> Result<Method, String> {
        match s.trim().to_ascii_lowercase().as_str() {
            "reflection" => Ok(Method::Reflection),
            "series" => Ok(Method::Series),
            "shunt" => Ok(Method::Shunt),
            other => Err(format!("unknown method '{}'; expected reflection, series or shunt", other)),
        }
    }
}

/// Impedance of the part under test, SI units, with what was done to get it.
#[derive(Debug, Clone, PartialEq)]
pub struct ImpedanceSweep {
    pub source: SourceInfo,
    pub freq_hz: Vec<f64>,
    /// Impedance in ohms, R + jX.
    pub z: Vec<C64>,
    /// The set-up used (None when the file already held impedance).
    pub method: Option<Method>,
    /// Reference impedance used for the conversion, ohms (None for direct Z).
    pub z0: Option<f64>,
    /// What detection chose, carried over from the [`Sweep`].
    pub detected: Vec<String>,
    /// Corrections applied, in words ("empty fixture subtracted: empty.s1p sha256 ...").
    pub corrections: Vec<String>,
    pub warnings: Vec<String>,
}

/// How the user asked a file to be read; every field may be left to auto-detection.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ReadOptions {
    /// CSV column override (syntax in [`csv_table`]).
    pub columns: Option<String>,
    /// For Touchstone files with more than two ports: the (1-based) port pair to keep.
    pub ports: Option<(usize, usize)>,
}

/// Lower-case hex SHA-256.
pub fn sha256_hex(bytes: &[u8]) -> String {
    let digest = Sha256::digest(bytes);
    digest.iter().map(|b| format!("{:02x}", b)).collect()
}

/// Read a measurement file of any supported kind; the format is chosen from the extension
/// (`.sNp`, `.ts` → Touchstone) and otherwise from the content.
pub fn read_sweep(path: &Path, opts: &ReadOptions) -> Result<Sweep, IngestError> {
    let bytes = std::fs::read(path).map_err(|e| {
        Diagnostic::new(format!("cannot read the file: {}", e))
            .file(path)
            .expected("a readable Touchstone (.s1p, .s2p, .ts) or CSV file")
            .hint("check the path and the file's permissions")
    })?;
    let source = SourceInfo::from_bytes(path, &bytes);
    let sweep = if touchstone::looks_like_touchstone(path, &bytes) {
        touchstone::read_sweep(&bytes, source, opts)
    } else {
        csv_table::read_sweep(&bytes, source, opts)
    };
    let sweep = sweep.map_err(|e| IngestError(e.0.in_file(path)))?;
    validate::check_sweep(sweep).map_err(|e| IngestError(e.0.in_file(path)))
}

/// Fixture correction to apply after the conversion to impedance.
#[derive(Debug, Clone, Default, PartialEq)]
pub enum FixtureCorrection {
    #[default]
    None,
    /// Subtract an empty-fixture sweep ([`fixture::subtract_empty`]).
    Empty(PathBuf),
    /// Open/short compensation ([`fixture::compensate_open_short`]).
    OpenShort { open: PathBuf, short: PathBuf },
}

/// Everything that decides how a measurement file becomes the part's impedance; shared by every
/// command that reads sweeps, so `ingest`, `extract` and `fit` accept the same options.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct IngestOptions {
    pub read: ReadOptions,
    /// None: the default for the kind of data (see [`method`]).
    pub method: Option<Method>,
    /// Reference impedance replacing the file's, ohms.
    pub z0: Option<f64>,
    pub fixture: FixtureCorrection,
}

/// Read, check and convert one file, then apply the fixture correction. Fixture files are read
/// with the same options, method and reference as the measurement.
pub fn ingest_file(path: &Path, opts: &IngestOptions) -> Result<ImpedanceSweep, IngestError> {
    let as_impedance = |p: &Path| -> Result<ImpedanceSweep, IngestError> {
        let sweep = read_sweep(p, &opts.read)?;
        method::to_impedance(&sweep, opts.method, opts.z0).map_err(|e| IngestError(e.0.in_file(p)))
    };
    let meas = as_impedance(path)?;
    match &opts.fixture {
        FixtureCorrection::None => Ok(meas),
        FixtureCorrection::Empty(empty) => fixture::subtract_empty(meas, &as_impedance(empty)?),
        FixtureCorrection::OpenShort { open, short } => {
            fixture::compensate_open_short(meas, &as_impedance(open)?, &as_impedance(short)?)
        }
    }
}
