//! thermosieve-engine: the chemistry of a screen, and nothing else.
//!
//! It owns reading formulas and equations, balancing them exactly, finding each species'
//! thermodynamic data (bundled NASA Glenn polynomials or values supplied with the request) and
//! computing reaction properties over a temperature grid. It must not do I/O, spawn threads or
//! depend on an async runtime or a dataframe library: the services around it do that, and the
//! engine's tests run in seconds.
//!
//! # Layout
//! - [`elements`]: the periodic table and standard atomic weights.
//! - [`rational`]: exact fractions for balancing.
//! - [`formula`]: species tokens (`CuSO4·5H2O(cr)`, `SO4^2-`, `C(gr)`), with limits.
//! - [`equation`]: equations, arrows and written coefficients.
//! - [`balance`]: the element/charge matrix and its exact null space.
//! - [`species`]: the bundled data table, polynomial models and species resolution.
//! - [`smiles`]: SMILES structures: molecular graphs, formulas and canonical identity.
//! - [`names`]: compounds by name and CAS number, with melting and boiling points.
//! - [`benson`]: Benson second-order group additivity for ideal-gas species without data.
//! - [`joback`]: Joback & Reid group-contribution estimates for species without data.
//! - [`structures`]: SMILES species in equations: bundled structures and estimation.
//! - [`thermo`]: temperature grids and reaction properties (ΔrH°, ΔrS°, ΔrG°, log10 K).
//! - [`screen`]: one reaction end to end, with a species cache for batches.
//! - [`decomposition`]: maximum heats of decomposition and energetic groups of species.
//! - [`process`]: one reaction at its process conditions: equilibrium, heat budget, criticality, gas.
//! - [`routes`]: the steps of each route rolled up, and the routes of a batch ranked.

pub mod balance;
pub mod benson;
pub mod decomposition;
pub mod elements;
pub mod equation;
pub mod formula;
pub mod joback;
pub mod names;
pub mod process;
pub mod rational;
pub mod routes;
pub mod screen;
pub mod smiles;
pub mod species;
pub mod structures;
pub mod thermo;
mod tsv;
pub use tsv::DataError;

pub use process::{evaluate as evaluate_process, CaseProcess, ProcessConditions, ProcessError};
pub use routes::{ranks, roll_up, summarise, RouteScore, RouteStep, RouteSummary, StepFacts};
pub use screen::{ScreenError, Screened, Screener};
pub use thermo::{TemperatureGrid, ThermoPoint};

/// Engine version, written into every result.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");

/// The caution shown wherever results are shown.
pub const CAUTION: &str = "Screening estimates, not a safety assessment: confirm thermal hazards by reaction \
calorimetry and DSC/ARC before scale-up, and follow local codes, the site's process-safety procedures and \
licensed professional judgement. Estimated data can be wrong by tens of kJ/mol.";
