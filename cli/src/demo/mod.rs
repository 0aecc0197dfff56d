//! The demo scenario: an invented airless moon, **Oressa** (radius 1,950 km), surveyed by two
//! invented gravity campaigns — the early, sparse and noisy *Wickline* survey with a polar gap,
//! and the later, denser and quieter *Halyard* survey — plus a topography grid whose spectrum
//! is partly correlated with gravity. Nothing here describes a real body or mission.
//!
//! `kugel make-demo` regenerates every file deterministically from fixed seeds (ChaCha8).

pub mod scenario;
pub mod surveys;
pub mod write;

pub use scenario::{Scenario, Truth};
pub use surveys::SurveyDesign;
pub use write::{write_demo, write_demo_with, DemoReport};
