//! The chart kinds on plain data (vectors, `ndarray` arrays and small input
//! structs), for results that did not come from stratanet or for charts
//! drawn differently. Stratanet's own results have chart methods instead
//! (`fitted.learning_curves_chart()`, see [`chart`](super)).

pub use super::columns::{column_overview, ColumnSummary};
pub use super::compare::{cross_validation_comparison, ConfigurationScores};
pub use super::components::{projected_rows, ProjectedRows};
pub use super::confusion::confusion_matrix;
pub use super::curves::{precision_recall_curves, roc_curves, Curve};
pub use super::decision::{decision_map, ClassPoints, CONTOUR_STROKE, CONTOUR_WIDTH};
pub use super::hidden::hidden_layer;
pub use super::importance::{permutation_importance, FeatureImportance};
pub use super::learning::{learning_curves, TrainingHistory, YScale};
pub use super::nested::{nested_cross_validation, NestedOutcome, OuterFold};
pub use super::pca::{principal_components_2, PrincipalComponents};
pub use super::regression::{predicted_actual, residuals, PredictedActual};
pub use super::reliability::{reliability_diagram, ReliabilityBin};
pub use super::weights::{weight_maps, NetworkWeights};
