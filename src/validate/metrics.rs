//! Classification and regression metrics.
