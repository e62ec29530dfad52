//! The front's picture and the decision report.
