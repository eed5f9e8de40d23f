//! One checked export plan from the raw command-line values: every option is parsed, every
//! combination checked and the material loaded before anything is computed or written.

use super::grid::FreqGrid;
use super::ExportError;
use crate::error::Diagnostic;
use crate::extract::band::hz;
use crate::extract::winding::{impedance_at, Winding};
use crate::geometry::Core;
use crate::library::{canonical::sha256_hex, Library, Material, Status, VersionRef};
use crate::model::Model;
use crate::units::parse_quantity;
use crate::C64;
use std::path::{Path, PathBuf};

/// Points of the default grid (over the material's valid band).
pub const DEFAULT_POINTS: usize = 201;
/// Reference impedance when none is given, ohms (common practice for analysers).
pub const DEFAULT_Z0: f64 = 50.0;

/// What the export writes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Csv,
    Touchstone,
    Spice,
}

impl Format {
    pub fn name(self) -> &'static str {
        match self {
            Format::Csv => "csv",
            Format::Touchstone => "touchstone",
            Format::Spice => "spice",
        }
    }

    pub fn parse(text: &str) -> Result<Format, ExportError> {
        [Format::Csv, Format::Touchstone, Format::Spice]
            .into_iter()
            .find(|f| f.name() == text.trim().to_ascii_lowercase())
            .ok_or_else(|| {
                Diagnostic::new(format!("--format: unknown format {:?}", text))
                    .expected("csv, touchstone or spice")
                    .into()
            })
    }
}

/// The command line as typed (the core already resolved by the caller, which knows the cores
/// file); `None` means the option was not given.
#[derive(Debug, Clone, Default)]
pub struct Request {
    pub library: PathBuf,
    /// `ID` or `ID@N`.
    pub material: String,
    pub format: String,
    pub freq: Option<String>,
    pub core: Option<Core>,
    pub turns: Option<String>,
    pub cores: Option<u32>,
    pub lead_inductance: Option<String>,
    pub winding_capacitance: Option<String>,
    pub z0: Option<String>,
    pub ports: Option<usize>,
    pub name: Option<String>,
    pub output: PathBuf,
}

/// A wound core: what turns a material's μ into an impedance.
#[derive(Debug, Clone, PartialEq)]
pub struct Device {
    pub core: Core,
    pub winding: Winding,
}

impl Device {
    /// The winding's impedance with the material `model` (the extract stage's μ → Z).
    pub fn impedance(&self, model: &Model, f_hz: f64) -> C64 {
        impedance_at(f_hz, model.mu(f_hz), &self.core, &self.winding)
    }
}

/// The material version being exported and where it came from.
#[derive(Debug, Clone, PartialEq)]
pub struct Source {
    pub material: Material,
    pub model: Model,
    pub path: PathBuf,
    /// SHA-256 of the material file's bytes.
    pub file_sha256: String,
    /// Lifecycle status, or why it could not be read.
    pub status: Result<Status, String>,
}

/// The format-specific part of a plan.
#[derive(Debug, Clone, PartialEq)]
pub enum Target {
    Csv,
    Touchstone {
        device: Device,
        ports: usize,
        z0: f64,
    },
    Spice {
        device: Device,
        name: String,
    },
}

impl Target {
    pub fn format(&self) -> Format {
        match self {
            Target::Csv => Format::Csv,
            Target::Touchstone { .. } => Format::Touchstone,
            Target::Spice { .. } => Format::Spice,
        }
    }
    pub fn device(&self) -> Option<&Device> {
        match self {
            Target::Csv => None,
            Target::Touchstone { device, .. } | Target::Spice { device, .. } => Some(device),
        }
    }
}

/// Everything an export needs, checked.
#[derive(Debug, Clone, PartialEq)]
pub struct ExportPlan {
    pub source: Source,
    pub grid: FreqGrid,
    pub target: Target,
    pub output: PathBuf,
    /// What the user should know about this export (written into the file and printed).
    pub warnings: Vec<String>,
}

fn refuse(message: String, expected: &str, hint: &str) -> ExportError {
    Diagnostic::new(message)
        .expected(expected)
        .hint(hint)
        .into()
}

/// Check the request and load the material.
pub fn plan(req: &Request) -> Result<ExportPlan, ExportError> {
    let format = Format::parse(&req.format)?;
    check_options_fit_format(req, format)?;
    let vref = VersionRef::parse(&req.material).map_err(|e| ExportError(e.0))?;
    let grid = req.freq.as_deref().map(FreqGrid::parse).transpose()?;
    let target = match format {
        Format::Csv => Target::Csv,
        Format::Touchstone => Target::Touchstone {
            ports: touchstone_ports(req.ports, &req.output)?,
            z0: positive(req.z0.as_deref(), "--z0", "ohm", "e.g. --z0 50")?.unwrap_or(DEFAULT_Z0),
            device: device(req)?,
        },
        Format::Spice => Target::Spice {
            name: subckt_name(req.name.as_deref(), &vref.material)?,
            device: device(req)?,
        },
    };
    let source = load(&req.library, &vref)?;
    if format == Format::Spice {
        super::synthesis::check_model(&source.model, &source.material.reference())?;
    }
    let band = source.material.band;
    let grid = match grid {
        Some(g) => g,
        None => FreqGrid::new(band.f_min_hz, band.f_max_hz, DEFAULT_POINTS)?,
    };
    let warnings = warnings(&source, &grid, &target);
    Ok(ExportPlan {
        source,
        grid,
        target,
        output: req.output.clone(),
        warnings,
    })
}

/// Options that describe a wound core, a port set-up or a sub-circuit, refused where they do
/// not apply (silently ignoring them would hide a misunderstanding).
fn check_options_fit_format(req: &Request, format: Format) -> Result<(), ExportError> {
    let device_opts = [
        ("--core", req.core.is_some()),
        ("--turns", req.turns.is_some()),
        ("--cores", req.cores.is_some()),
        ("--lead-inductance", req.lead_inductance.is_some()),
        ("--winding-capacitance", req.winding_capacitance.is_some()),
    ];
    let only = |opt: &str, given: bool, formats: &[Format]| -> Result<(), ExportError> {
        if given && !formats.contains(&format) {
            let names: Vec<&str> = formats.iter().map(|f| f.name()).collect();
            return Err(refuse(
                format!("{} does not apply to --format {}", opt, format.name()),
                &format!("{} only with --format {}", opt, names.join(" or ")),
                "the csv export is the material's μ alone; touchstone and spice describe a wound core",
            ));
        }
        Ok(())
    };
    for (opt, given) in device_opts {
        only(opt, given, &[Format::Touchstone, Format::Spice])?;
    }
    only("--z0", req.z0.is_some(), &[Format::Touchstone])?;
    only("--ports", req.ports.is_some(), &[Format::Touchstone])?;
    only("--name", req.name.is_some(), &[Format::Spice])
}

/// A positive, finite quantity in `unit`, when given.
fn positive(
    text: Option<&str>,
    opt: &str,
    unit: &str,
    hint: &str,
) -> Result<Option<f64>, ExportError> {
    let Some(t) = text else { return Ok(None) };
    let v = parse_quantity(t, unit)
        .map_err(|e| refuse(format!("{}: {}", opt, e), "a positive number", hint))?;
    if v > 0.0 {
        Ok(Some(v))
    } else {
        Err(refuse(
            format!("{}: {} must be positive", opt, t),
            "a positive number",
            hint,
        ))
    }
}

fn device(req: &Request) -> Result<Device, ExportError> {
    let core = req.core.clone().ok_or_else(|| {
        refuse(
            "touchstone and spice exports describe a wound core and need --core".into(),
            "--core SHAPE:key=value,... or a name from the cores file",
            "e.g. --core toroid:od=25mm,id=15mm,h=10mm --turns 3",
        )
    })?;
    let turns = positive(req.turns.as_deref(), "--turns", "", "e.g. --turns 3")?.unwrap_or(1.0);
    let cores = req.cores.unwrap_or(1);
    if cores == 0 {
        return Err(refuse(
            "--cores: 0 cores".into(),
            "a whole number from 1",
            "e.g. --cores 2",
        ));
    }
    let winding = Winding {
        turns,
        cores,
        c_p: positive(
            req.winding_capacitance.as_deref(),
            "--winding-capacitance",
            "F",
            "e.g. 2.2pF",
        )?,
        l_lead: positive(
            req.lead_inductance.as_deref(),
            "--lead-inductance",
            "H",
            "e.g. 35nH",
        )?,
    };
    Ok(Device { core, winding })
}

/// Port count from `--ports` or the output's `.s1p`/`.s2p` name; both, when given, must agree.
fn touchstone_ports(ports: Option<usize>, output: &Path) -> Result<usize, ExportError> {
    let from_name = crate::ingest::touchstone::ports_from_extension(output);
    let expected = "--ports 1 (reflection, .s1p) or --ports 2 (series-through, .s2p)";
    match (ports, from_name) {
        (Some(p), _) if p != 1 && p != 2 => Err(refuse(format!("--ports {}", p), expected, "")),
        (Some(p), Some(n)) if p != n => Err(refuse(
            format!(
                "--ports {} disagrees with the output name {}",
                p,
                output.display()
            ),
            expected,
            &format!("name the output .s{}p or drop --ports", p),
        )),
        (Some(p), _) => Ok(p),
        (None, Some(n)) if n == 1 || n == 2 => Ok(n),
        (None, Some(n)) => Err(refuse(
            format!("{} asks for {} ports", output.display(), n),
            expected,
            "a wound core is a one-port or a series two-port",
        )),
        (None, None) => Err(refuse(
            format!("cannot tell the port count from {}", output.display()),
            expected,
            "name the output .s1p or .s2p, or give --ports",
        )),
    }
}

/// A SPICE sub-circuit name: `--name`, or the material id with every character other than a
/// letter, digit or '_' replaced by '_'.
fn subckt_name(given: Option<&str>, material: &str) -> Result<String, ExportError> {
    let name = match given {
        Some(n) => n.to_string(),
        None => {
            let s: String = material
                .chars()
                .map(|c| if c.is_ascii_alphanumeric() { c } else { '_' })
                .collect();
            if s.starts_with(|c: char| c.is_ascii_digit()) {
                format!("m_{}", s)
            } else {
                s
            }
        }
    };
    let ok = !name.is_empty()
        && name.len() <= 64
        && name.starts_with(|c: char| c.is_ascii_alphabetic() || c == '_')
        && name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_');
    if ok {
        Ok(name)
    } else {
        Err(refuse(
            format!("--name {:?} is not a portable SPICE sub-circuit name", name),
            "1 to 64 characters: a letter or '_' first, then letters, digits or '_'",
            "e.g. --name core_3t",
        ))
    }
}

fn load(root: &Path, vref: &VersionRef) -> Result<Source, ExportError> {
    let lib = Library::new(root);
    let material = lib.resolve(vref).map_err(|e| ExportError(e.0))?;
    let path = lib.version_path(&material.material, material.version);
    let bytes = std::fs::read(&path).map_err(|e| {
        ExportError(Diagnostic::new(format!("cannot read material file: {}", e)).file(&path))
    })?;
    let model = material.to_model().map_err(|e| ExportError(e.0))?;
    let status = lib
        .log(&material.material)
        .map(|log| {
            log.status
                .get(&material.version)
                .copied()
                .unwrap_or(Status::Draft)
        })
        .map_err(|e| e.0.message);
    Ok(Source {
        file_sha256: sha256_hex(&bytes),
        material,
        model,
        path,
        status,
    })
}

fn warnings(source: &Source, grid: &FreqGrid, target: &Target) -> Vec<String> {
    let mut w = Vec::new();
    let band = source.material.band;
    if grid.start_hz < band.f_min_hz * (1.0 - 1e-9) || grid.stop_hz > band.f_max_hz * (1.0 + 1e-9) {
        w.push(format!(
            "the export band {} to {} reaches beyond the material's valid band {} to {}; values outside it are the model's extrapolation, not measured behaviour",
            hz(grid.start_hz), hz(grid.stop_hz), hz(band.f_min_hz), hz(band.f_max_hz)
        ));
    }
    match &source.status {
        Ok(Status::Vetted) => {}
        Ok(Status::Draft) => w.push(format!(
            "{} is a draft: it has not been vetted",
            source.material.reference()
        )),
        Ok(Status::Retired) => w.push(format!(
            "{} is retired; see `mucurve library history {}`",
            source.material.reference(),
            source.material.material
        )),
        Err(why) => w.push(format!(
            "the lifecycle status of {} is unknown: {}",
            source.material.reference(),
            why
        )),
    }
    // Only the physics-sanity findings travel with every exported file; reader notes about the
    // source sweeps stay in the material file. Older files without the list repeat them all.
    let findings = source.material.sanity.as_ref().unwrap_or(&source.material.warnings);
    if !findings.is_empty() {
        w.push(format!(
            "the fit behind {} has sanity findings: {}",
            source.material.reference(),
            findings.join("; ")
        ));
    }
    if target.device().is_some_and(|d| d.core.gap_unknown()) {
        w.push("the split core's gap is not stated: it is taken as fully closed (no gap), which overstates the impedance of a real split core".into());
    }
    w
}
