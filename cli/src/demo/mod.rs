//! The demo scenario: an invented airless moon, **Oressa** (radius 1,950 km), with a
//! magnetised crust and no dynamo, observed by three invented campaigns as instruments would
//! observe it — the orbiter *Wickline* (gravity disturbances at about 100 km altitude, polar
//! gap), the ground traverse *Halyard* (gravity anomalies at stations on the topography of one
//! region) and the low magnetic orbiter *Brindle* (X, Y, Z at 30–60 km) — plus a topography
//! grid whose spectrum is partly correlated with gravity. Nothing here describes a real body
//! or mission.
//!
//! `kugel make-demo` regenerates every file deterministically from fixed seeds (ChaCha8).

pub mod scenario;
pub mod sites;
pub mod surveys;
pub mod write;

pub use scenario::{Scenario, Truth};
pub use surveys::SurveyDesign;
pub use write::{write_demo, write_demo_with, DemoReport};
