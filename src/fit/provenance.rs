//! Where a model came from: [`Provenance`].

use crate::data::TablePart;

/// Where a model came from: the library, the table and a summary of training.
#[derive(Clone, Debug, PartialEq)]
pub struct Provenance {
    /// The stratanet version that trained the model.
    pub library_version: String,
    /// [`Dataset::fingerprint`](crate::data::Dataset::fingerprint) of the whole table given to `fit`.
    pub table_fingerprint: String,
    /// Rows in that table.
    pub table_rows: usize,
    /// Where the table came from (its path, or a description).
    pub table_source: String,
    /// Rows used for training and for validation.
    pub rows_used: (usize, usize),
    /// Epochs run by the kept restart.
    pub epochs_run: usize,
    /// The epoch whose weights were kept.
    pub best_epoch: usize,
    /// The best validation loss, when there were validation rows.
    pub best_validation_loss: Option<f64>,
    /// Whether early stopping ended training.
    pub stopped_early: bool,
    /// The final training loss of the kept restart.
    pub final_training_loss: f64,
    /// How the options were chosen, when a sweep chose them (the search,
    /// the metric, the configuration, and the plan file's checksum when the
    /// sweep ran from one).
    pub selected_by: Option<String>,
    /// The baseline's loss on the training rows
    /// ([`Baseline`](super::Baseline)).
    pub baseline_training_loss: Option<f64>,
    /// The baseline's loss on the validation rows, when there were some.
    pub baseline_validation_loss: Option<f64>,
    /// What the fit flagged ([`Fitted::warnings`](super::Fitted::warnings)).
    pub warnings: Vec<String>,
    /// In the fast arithmetic mode, whether the CPU that trained the model
    /// fused its multiply-adds ([`fast_mode_fuses`](crate::network::fast_mode_fuses)):
    /// a rerun gives the same bits only on a CPU that does the same. `None`
    /// in the portable mode, whose bits depend on no property of the CPU.
    pub fused_multiply_add: Option<bool>,
    /// Which part of a larger table the training table was (the
    /// development subset of a [`HoldOut::split`](crate::validate::HoldOut::split)),
    /// so that [`Provenance::table_rows`] is never read as the whole file.
    pub table_part: Option<TablePart>,
}

impl Provenance {
    /// The training table's rows in words: "600 rows", or "480 of 600 rows:
    /// development subset; 120 held out".
    pub fn table_rows_described(&self) -> String {
        match self.table_part {
            Some(part) => part.describe(self.table_rows),
            None => format!("{} rows", self.table_rows),
        }
    }
}
