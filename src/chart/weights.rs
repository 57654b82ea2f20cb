//! A network's weights as a staircase of heat maps: one block of squares
//! per layer, coloured on a diverging scale by the weight's sign and size,
//! each block turned so that it shares its units with its neighbours.

use ndarray::Array2;

use super::draw::{format_value, render, Block, Entry, Figure, Key, Panel, StairPanel};
use super::theme::{self, scale_colour, Rgb, SUNSET};
use super::{group_digits, Chart, ChartOptions};
use crate::{Error, Result};

/// The largest square, in pixels.
const MAX_CELL: f64 = 22.0;

/// A network's layer sizes, weights and biases, as plain data.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct NetworkWeights {
    /// Units per layer, inputs first, outputs last (at least two layers).
    pub layer_sizes: Vec<usize>,
    /// One matrix per pair of neighbouring layers, shaped
    /// `layer_sizes[l]` x `layer_sizes[l + 1]` (inputs x outputs).
    pub weights: Vec<Array2<f64>>,
    /// One bias per unit of each layer after the inputs (one list per
    /// weight matrix), when known.
    pub biases: Option<Vec<Vec<f64>>>,
    /// Names of the input columns, one per input unit.
    pub input_names: Option<Vec<String>>,
    /// Names of the outputs (classes or targets), one per output unit.
    pub output_names: Option<Vec<String>>,
}

/// Draws every weight of a network as a square in a staircase of blocks.
///
/// Block 1 holds the weights into the first hidden layer: one row per
/// input, one column per hidden unit. Block 2 hangs under it with the same
/// columns (those hidden units, now its inputs) and one row per unit of
/// the next layer; block 3 stands right of block 2 with the same rows; and
/// so on down to the outputs. A unit's incoming weights (its column in one
/// block) and outgoing weights (the same column, or row, of the next) line
/// up. Biases, when given, are a separate line beside each block.
///
/// Each square is coloured on Tol's diverging "sunset" scale by
///
/// ```text
/// t = 1/2 + w / (2 max |w|),   max over every weight and bias drawn
/// ```
///
/// (blue negative, pale zero, red positive; the scale is in the legend),
/// and squares of at least 8 pixels carry a short bar when negative, so the
/// sign reads in grey print too. Non-finite weights are grey (noted).
///
/// The staircase stays readable for wide networks (30-64-32-2 draws 4,226
/// squares of about 7 pixels at the default width) because every weight
/// keeps its own place instead of a line across the chart.
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) for fewer
/// than two layers, a layer of size 0, or the wrong number of weight
/// matrices; [`ErrorKind::ShapeMismatch`](crate::ErrorKind::ShapeMismatch)
/// for a weight matrix, bias list or name list of the wrong size.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{weight_maps, NetworkWeights};
/// use stratanet::chart::ChartOptions;
/// use stratanet::ndarray::array;
///
/// let network = NetworkWeights {
///     layer_sizes: vec![2, 3, 1],
///     weights: vec![array![[0.5, -1.2, 0.1], [0.9, 0.3, -0.4]], array![[1.5], [-0.7], [0.2]]],
///     biases: Some(vec![vec![0.1, 0.0, -0.2], vec![0.3]]),
///     input_names: Some(vec!["bore_um".into(), "roughness_um".into()]),
///     output_names: Some(vec!["P(fail)".into()]),
/// };
/// let chart = weight_maps(&network, &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("bore (µm)"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn weight_maps(network: &NetworkWeights, options: &ChartOptions) -> Result<Chart> {
    let figure = prepare(network, options)?;
    render(&figure, options)
}

/// The name of layer `l` of `n` layers (0 = inputs).
fn layer_name(l: usize, n: usize) -> String {
    match l {
        0 => "inputs".to_string(),
        _ if l == n - 1 => "outputs".to_string(),
        _ => format!("hidden {l}"),
    }
}

/// What the staircase will show.
pub(crate) fn prepare(network: &NetworkWeights, options: &ChartOptions) -> Result<Figure> {
    let what = "weight maps";
    let sizes = &network.layer_sizes;
    if sizes.len() < 2 {
        return Err(Error::input(
            what,
            format!(
                "need at least 2 layers (inputs and outputs), found {}",
                sizes.len()
            ),
        ));
    }
    if let Some(l) = sizes.iter().position(|&s| s == 0) {
        return Err(Error::input(what, format!("layer {l} has no units")));
    }
    if network.weights.len() != sizes.len() - 1 {
        return Err(Error::input(
            what,
            format!(
                "{} layers need {} weight matrices, found {}",
                sizes.len(),
                sizes.len() - 1,
                network.weights.len()
            ),
        ));
    }
    for (l, w) in network.weights.iter().enumerate() {
        if w.dim() != (sizes[l], sizes[l + 1]) {
            return Err(Error::shape(
                format!("weight maps: weights of layer {} (inputs x outputs)", l + 1),
                (sizes[l], sizes[l + 1]),
                w.dim(),
            ));
        }
    }
    if let Some(biases) = &network.biases {
        if biases.len() != network.weights.len() {
            return Err(Error::shape(
                "weight maps: one bias list per weight matrix",
                (network.weights.len(), 1),
                (biases.len(), 1),
            ));
        }
        for (l, b) in biases.iter().enumerate() {
            if b.len() != sizes[l + 1] {
                return Err(Error::shape(
                    format!("weight maps: biases of layer {} (one per unit)", l + 1),
                    (sizes[l + 1], 1),
                    (b.len(), 1),
                ));
            }
        }
    }
    let names = |given: &Option<Vec<String>>, size: usize, which: &str| -> Result<Vec<String>> {
        match given {
            Some(n) if n.len() != size => Err(Error::shape(
                format!("weight maps: one {which} name per {which} unit"),
                (size, 1),
                (n.len(), 1),
            )),
            Some(n) => Ok(n.iter().map(|s| super::axis_label(s)).collect()),
            None => Ok((1..=size).map(|i| format!("{which} {i}")).collect()),
        }
    };
    let inputs = names(&network.input_names, sizes[0], "input")?;
    let outputs = names(&network.output_names, sizes[sizes.len() - 1], "output")?;

    let all = network
        .weights
        .iter()
        .flat_map(|w| w.iter().copied())
        .chain(
            network
                .biases
                .iter()
                .flatten()
                .flat_map(|b| b.iter().copied()),
        );
    let (mut largest, mut non_finite) = (0.0f64, 0usize);
    for v in all {
        if v.is_finite() {
            largest = largest.max(v.abs());
        } else {
            non_finite += 1;
        }
    }
    let limit = if largest > 0.0 { largest } else { 1.0 };
    let colour = |v: f64| -> Rgb {
        if v.is_finite() {
            scale_colour(&SUNSET, 0.5 + 0.5 * v / limit)
        } else {
            theme::EMPTY
        }
    };
    let n = sizes.len();
    let blocks: Vec<Block> = network
        .weights
        .iter()
        .enumerate()
        .map(|(l, w)| {
            let biases: Vec<f64> = network
                .biases
                .as_ref()
                .map_or_else(Vec::new, |b| b[l].clone());
            Block {
                caption: format!("{}", l + 1),
                cells: w
                    .rows()
                    .into_iter()
                    .map(|r| r.iter().map(|&v| colour(v)).collect())
                    .collect(),
                negative: w
                    .rows()
                    .into_iter()
                    .map(|r| r.iter().map(|&v| v < 0.0).collect())
                    .collect(),
                biases: biases.iter().map(|&v| colour(v)).collect(),
                negative_bias: biases.iter().map(|&v| v < 0.0).collect(),
            }
        })
        .collect();
    let panel = StairPanel {
        blocks,
        inputs,
        outputs: outputs.clone(),
        max_cell: MAX_CELL,
    };
    let mut notes: Vec<String> = (0..network.weights.len())
        .map(|l| {
            let to = if l + 2 == n && outputs.len() <= 6 {
                format!("outputs ({})", outputs.join(", "))
            } else {
                format!(
                    "{} ({} units)",
                    layer_name(l + 1, n),
                    group_digits(sizes[l + 1])
                )
            };
            format!(
                "block {}: {} → {to}, {}",
                l + 1,
                layer_name(l, n),
                if l % 2 == 0 {
                    "one row per unit it comes from"
                } else {
                    "one column per unit it comes from"
                }
            )
        })
        .collect();
    if network.biases.is_some() {
        notes.push(
            "biases: the separate line beside each block (above it, or left of it)".to_string(),
        );
    }
    let cell = panel.cell_in(super::draw::Rect::new(
        0.0,
        0.0,
        options.width as f64 - 24.0,
        f64::INFINITY,
    ));
    if cell >= super::draw::DASH_CELL {
        notes.push("a short bar marks each negative value, for grey print".to_string());
    }
    if non_finite > 0 {
        notes.push(format!(
            "{} non-finite weight{} shown grey",
            group_digits(non_finite),
            if non_finite == 1 { "" } else { "s" }
        ));
    }
    let subtitle = vec![format!(
        "{} weights, one square each; neighbouring blocks share their units along the edge they face",
        group_digits(network.weights.iter().map(|w| w.len()).sum())
    )];
    let legend = vec![Entry::new(
        "weight",
        Key::Scale {
            stops: SUNSET.to_vec(),
            ticks: vec![
                (0.0, format_value(-limit)),
                (0.5, "0".into()),
                (1.0, format_value(limit)),
            ],
        },
    )];
    let frame = options.frame(
        format!(
            "Weights of a {} network",
            sizes
                .iter()
                .map(usize::to_string)
                .collect::<Vec<_>>()
                .join("-")
        ),
        subtitle,
        legend,
        notes,
    );
    Ok(Figure::single(frame, Panel::Stair(panel)))
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::*;

    /// Deterministic weights in [-2, 2] with both signs.
    fn weights(rows: usize, columns: usize, seed: usize) -> Array2<f64> {
        Array2::from_shape_fn((rows, columns), |(i, j)| {
            (((i * 31 + j * 17 + seed * 7) % 41) as f64 / 10.0 - 2.0)
                * if (i + j + seed).is_multiple_of(3) {
                    0.3
                } else {
                    1.0
                }
        })
    }

    fn network(sizes: &[usize]) -> NetworkWeights {
        NetworkWeights {
            layer_sizes: sizes.to_vec(),
            weights: sizes
                .windows(2)
                .enumerate()
                .map(|(l, w)| weights(w[0], w[1], l))
                .collect(),
            biases: Some(
                sizes[1..]
                    .iter()
                    .enumerate()
                    .map(|(l, &s)| (0..s).map(|j| ((j + l) % 5) as f64 * 0.2 - 0.4).collect())
                    .collect(),
            ),
            input_names: None,
            output_names: None,
        }
    }

    fn small() -> NetworkWeights {
        NetworkWeights {
            input_names: Some(vec![
                "bore_um".into(),
                "roughness_um".into(),
                "inlet_temp_c".into(),
                "pressure_kpa".into(),
            ]),
            output_names: Some(vec!["pass".into(), "rework".into(), "scrap".into()]),
            ..network(&[4, 6, 3])
        }
    }

    #[test]
    fn small_network_with_names() {
        let figure = prepare(&small(), &ChartOptions::default()).unwrap();
        let Panel::Stair(stair) = &figure.panels[0] else {
            panic!()
        };
        let (slots, _) = stair.slots();
        // Block 2 hangs under block 1 and shares its columns (the 6 hidden units).
        assert_eq!((slots[0].columns, slots[0].rows), (6.0, 4.0));
        assert_eq!(
            (slots[1].x, slots[1].columns, slots[1].rows),
            (0.0, 6.0, 3.0)
        );
        assert!(slots[1].y > slots[0].y + slots[0].rows);
        // The largest magnitude is the scale's end; zero is its middle.
        let Key::Scale { ticks, .. } = &figure.frame.legend[0].key else {
            panic!()
        };
        assert_eq!(ticks[1], (0.5, "0".to_string()));
        let chart = render(&figure, &ChartOptions::default()).unwrap();
        let r = check(&chart, "weights-small");
        assert!(r.has_text("bore (µm)") && r.has_text("inlet temp (°C)") && r.has_text("scrap"));
        assert!(r.has_text("block 1: inputs → hidden 1 (6 units), one row per unit it comes from"));
        assert!(r.has_text(
            "block 2: hidden 1 → outputs (pass, rework, scrap), one column per unit it comes from"
        ));
        // Every weight and bias is a square: 4*6 + 6*3 + 6 + 3.
        assert_eq!(chart.boxes().marks.len(), 24 + 18 + 9);
    }

    /// The acceptance size: 30-64-32-2 stays readable (squares of at least
    /// 5 px, names of every other input at least, nothing off the canvas).
    #[test]
    fn a_wide_network_stays_readable() {
        let figure = prepare(&network(&[30, 64, 32, 2]), &ChartOptions::default()).unwrap();
        let Panel::Stair(stair) = &figure.panels[0] else {
            panic!()
        };
        let chart = render(&figure, &ChartOptions::default()).unwrap();
        let cell = stair.cell_in(super::super::draw::Rect::new(
            0.0,
            0.0,
            696.0,
            f64::INFINITY,
        ));
        assert!(cell >= 5.0, "{cell}");
        let r = check(&chart, "weights-30-64-32-2");
        assert!(r.has_text("input 1") && r.has_text("block 3: hidden 2 → outputs (output 1, output 2), one row per unit it comes from"));
        assert_eq!(
            chart.boxes().marks.len(),
            30 * 64 + 64 * 32 + 32 * 2 + 64 + 32 + 2
        );
        let column = render(&figure, &ChartOptions::single_column()).unwrap();
        check(&column, "weights-30-64-32-2-column");
    }

    #[test]
    fn deep_network_and_bad_weights() {
        let mut n = network(&[5, 8, 8, 8, 1]);
        n.weights[1][[0, 0]] = f64::NAN;
        let figure = prepare(&n, &ChartOptions::default()).unwrap();
        assert!(figure
            .frame
            .notes
            .contains(&"1 non-finite weight shown grey".to_string()));
        let r = check(
            &render(&figure, &ChartOptions::default()).unwrap(),
            "weights-deep",
        );
        assert!(r.has_text_containing("block 4: hidden 3 → outputs (output 1)"));
    }

    #[test]
    fn inconsistent_input_is_refused() {
        let options = ChartOptions::default();
        let mut n = small();
        n.layer_sizes = vec![4];
        assert!(weight_maps(&n, &options).is_err());
        let mut n = small();
        n.weights.pop();
        assert!(weight_maps(&n, &options)
            .unwrap_err()
            .to_string()
            .contains("weight matrices"));
        let mut n = small();
        n.weights[1] = weights(5, 3, 0);
        let err = weight_maps(&n, &options).unwrap_err();
        assert!(err.to_string().contains("weights of layer 2"), "{err}");
        let mut n = small();
        n.output_names = Some(vec!["one".into()]);
        assert!(weight_maps(&n, &options)
            .unwrap_err()
            .to_string()
            .contains("output name"));
        let mut n = small();
        n.biases = Some(vec![vec![0.0; 6], vec![0.0; 2]]);
        assert!(weight_maps(&n, &options)
            .unwrap_err()
            .to_string()
            .contains("biases of layer 2"));
        let mut n = small();
        n.layer_sizes[1] = 0;
        assert!(weight_maps(&n, &options).is_err());
    }

    #[test]
    fn output_is_byte_identical() {
        let a = weight_maps(&small(), &ChartOptions::default()).unwrap();
        let b = weight_maps(&small(), &ChartOptions::default()).unwrap();
        assert_eq!(a.as_svg(), b.as_svg());
    }
}
