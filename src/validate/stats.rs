//! Distributions and tests used to compare models.
