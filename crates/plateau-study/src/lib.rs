//! The analysis layer both faces call: the CLI (`plateau-cli`) and the page
//! (`plateau-web`) turn their flags or settings into one validated request,
//! and read every answer, report, sentence and formatted number from here.
//! The core computes; this crate decides how results are put to people.

pub mod answer;
pub mod forecast_report;
pub mod held;
pub mod numbers;
pub mod report;
pub mod request;
pub mod study;
pub mod summary;
pub mod wording;
