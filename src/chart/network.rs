//! Network diagrams: layers as columns of nodes, connections coloured by
//! the sign of their weight and drawn heavier the larger it is.

use ndarray::Array2;

use super::draw::{self, fit_text, text_width, Align, Baseline, Font, Page, Rect};
use super::theme::{self, size, NEGATIVE, POSITIVE};
use super::{group_digits, Chart, ChartOptions};
use crate::{Error, Result};

/// Layers wider than this show their first `MAX_NODES_PER_LAYER - 1` nodes
/// and a "+N more" label.
pub const MAX_NODES_PER_LAYER: usize = 24;

/// Node fill and outline.
const NODE_FILL: theme::Rgb = theme::Rgb::hex(0xF7F7F7);
const NODE_LINE: theme::Rgb = theme::INK_SOFT;

/// A network's layer sizes and weights, as plain data.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct NetworkWeights {
    /// Units per layer, inputs first, outputs last (at least two layers).
    pub layer_sizes: Vec<usize>,
    /// One matrix per pair of neighbouring layers, shaped
    /// `layer_sizes[l]` x `layer_sizes[l + 1]` (inputs x outputs).
    pub weights: Vec<Array2<f64>>,
    /// Names of the input columns, one per input unit.
    pub input_names: Option<Vec<String>>,
    /// Names of the outputs (classes or targets), one per output unit.
    pub output_names: Option<Vec<String>>,
}

/// Draws a network as columns of nodes joined by its weights.
///
/// Connections are coloured by sign (positive: Okabe & Ito blue, negative:
/// vermillion) and get heavier and more opaque with their magnitude,
/// relative to the largest magnitude drawn:
///
/// ```text
/// m = |w| / max |w|,   stroke width = 1 + round(3 m) px,   opacity = 0.12 + 0.78 m
/// ```
///
/// Between two wide layers (more than 200 drawn connections) weak
/// connections fade faster, so that the strong ones stay readable:
/// stroke width = 1 + round(2 m) px, opacity = 0.06 + 0.74 m².
///
/// The strongest connections are drawn last, on top. Biases are not drawn.
/// Layers wider than [`MAX_NODES_PER_LAYER`] show their first nodes and a
/// "+N more" label; connections of the hidden nodes are left out and a note
/// says so. Non-finite weights are skipped (noted).
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) for fewer
/// than two layers, a layer of size 0, or the wrong number of weight
/// matrices; [`ErrorKind::ShapeMismatch`](crate::ErrorKind::ShapeMismatch)
/// for a weight matrix or name list of the wrong size.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{network_diagram, NetworkWeights};
/// use stratanet::chart::ChartOptions;
/// use stratanet::ndarray::array;
///
/// let network = NetworkWeights {
///     layer_sizes: vec![2, 3, 1],
///     weights: vec![array![[0.5, -1.2, 0.1], [0.9, 0.3, -0.4]], array![[1.5], [-0.7], [0.2]]],
///     input_names: Some(vec!["bore_um".into(), "roughness_um".into()]),
///     output_names: Some(vec!["P(fail)".into()]),
/// };
/// let chart = network_diagram(&network, &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("bore (µm)"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn network_diagram(network: &NetworkWeights, options: &ChartOptions) -> Result<Chart> {
    let title = options.check("Network")?;
    let what = "network diagram";
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
                format!(
                    "network diagram: weights of layer {} (inputs x outputs)",
                    l + 1
                ),
                (sizes[l], sizes[l + 1]),
                w.dim(),
            ));
        }
    }
    let check_names =
        |names: &Option<Vec<String>>, size: usize, which: &str| -> Result<Option<Vec<String>>> {
            match names {
                Some(n) if n.len() != size => Err(Error::shape(
                    format!("network diagram: one {which} name per {which} unit"),
                    (size, 1),
                    (n.len(), 1),
                )),
                Some(n) => Ok(Some(n.iter().map(|s| super::axis_label(s)).collect())),
                None => Ok(None),
            }
        };
    let inputs = check_names(&network.input_names, sizes[0], "input")?;
    let outputs = check_names(&network.output_names, sizes[sizes.len() - 1], "output")?;

    let shown: Vec<usize> = sizes
        .iter()
        .map(|&s| {
            if s > MAX_NODES_PER_LAYER {
                MAX_NODES_PER_LAYER - 1
            } else {
                s
            }
        })
        .collect();
    let mut notes = Vec::new();
    if sizes.iter().any(|&s| s > MAX_NODES_PER_LAYER) {
        notes.push(format!(
            "layers wider than {MAX_NODES_PER_LAYER} units show their first {}; connections of the others are not drawn",
            MAX_NODES_PER_LAYER - 1
        ));
    }
    // Connections to draw: (layer, from, to, weight), weakest first.
    let mut connections: Vec<(usize, usize, usize, f64)> = Vec::new();
    let mut non_finite = 0usize;
    for (l, w) in network.weights.iter().enumerate() {
        for i in 0..shown[l] {
            for j in 0..shown[l + 1] {
                let v = w[[i, j]];
                if v.is_finite() {
                    connections.push((l, i, j, v));
                } else {
                    non_finite += 1;
                }
            }
        }
    }
    if non_finite > 0 {
        notes.push(format!(
            "skipped {} non-finite weight{}",
            group_digits(non_finite),
            if non_finite == 1 { "" } else { "s" }
        ));
    }
    connections.sort_by(|a, b| a.3.abs().total_cmp(&b.3.abs()));
    let largest = connections.last().map_or(0.0, |c| c.3.abs());
    notes.push(format!(
        "line weight and opacity: |weight| relative to the largest drawn ({}); biases not shown",
        draw::format_value(largest)
    ));

    let last = sizes.len() - 1;
    let captions: Vec<String> = sizes
        .iter()
        .enumerate()
        .map(|(l, &s)| match l {
            0 => format!("inputs ({s})"),
            _ if l == last => format!("outputs ({s})"),
            _ => format!("hidden {l} ({s})"),
        })
        .collect();
    let name_width = |names: &Option<Vec<String>>| {
        names.as_ref().map_or(0.0, |n| {
            n.iter()
                .map(|s| text_width(s, size::TICK))
                .fold(0.0, f64::max)
                + 10.0
        })
    };

    draw::render(options.width, options.height, &title, |canvas| {
        let page = Page::new(canvas, &title, notes.clone());
        page.draw(canvas)?;
        let content = page.content;
        let key_bottom = draw_key(canvas, content.left, content.top)?;
        let left_names = name_width(&inputs).min(content.width() * 0.25);
        let right_names = name_width(&outputs).min(content.width() * 0.25);
        let caption_half = captions
            .iter()
            .map(|c| text_width(c, size::LABEL))
            .fold(0.0, f64::max)
            / 2.0;
        let area = Rect {
            left: content.left + left_names.max(caption_half),
            top: key_bottom + size::LABEL + 18.0,
            right: content.right - right_names.max(caption_half),
            bottom: content.bottom - 4.0,
        };
        let most = *shown.iter().max().unwrap_or(&1) as f64 + 1.0;
        let pitch = (area.height() / most).min(44.0);
        let radius = (pitch * 0.32).clamp(2.5, 11.0);
        let column_x = |l: usize| area.left + area.width() * l as f64 / last as f64;
        // Nodes of a layer are centred vertically, with a slot for "+N more".
        let node_y = |l: usize, i: usize| {
            let slots = shown[l] as f64 + if sizes[l] > shown[l] { 1.0 } else { 0.0 };
            area.centre_y() - (slots - 1.0) * pitch / 2.0 + i as f64 * pitch
        };
        for &(l, i, j, w) in &connections {
            let m = if largest > 0.0 {
                w.abs() / largest
            } else {
                0.0
            };
            let colour = if w >= 0.0 { POSITIVE } else { NEGATIVE };
            let (opacity, width) = if shown[l] * shown[l + 1] > 200 {
                (0.06 + 0.74 * m * m, 1.0 + (2.0 * m).round())
            } else {
                (0.12 + 0.78 * m, 1.0 + (3.0 * m).round())
            };
            canvas.line(
                &[
                    (column_x(l), node_y(l, i)),
                    (column_x(l + 1), node_y(l + 1, j)),
                ],
                colour,
                opacity,
                width,
            )?;
        }
        let label = Font::new(size::LABEL, theme::INK);
        let tick = Font::new(size::TICK, theme::INK_SOFT);
        for l in 0..sizes.len() {
            let x = column_x(l);
            canvas.text(
                &captions[l],
                x,
                key_bottom + 10.0,
                label,
                Align::Centre,
                Baseline::Top,
            )?;
            for i in 0..shown[l] {
                let y = node_y(l, i);
                canvas.circle(x, y, radius, NODE_FILL, 1.0)?;
                canvas.ring(x, y, radius, NODE_LINE, 1.0, 1.0)?;
                if l == 0 {
                    if let Some(names) = &inputs {
                        let text = fit_text(&names[i], size::TICK, left_names - 10.0);
                        canvas.text(
                            &text,
                            x - radius - 6.0,
                            y,
                            tick,
                            Align::Right,
                            Baseline::Middle,
                        )?;
                    }
                }
                if l == last {
                    if let Some(names) = &outputs {
                        let text = fit_text(&names[i], size::TICK, right_names - 10.0);
                        canvas.text(
                            &text,
                            x + radius + 6.0,
                            y,
                            tick,
                            Align::Left,
                            Baseline::Middle,
                        )?;
                    }
                }
            }
            if sizes[l] > shown[l] {
                let more = format!("+{} more", group_digits(sizes[l] - shown[l]));
                let y = node_y(l, shown[l]);
                canvas.text(
                    &more,
                    x,
                    y,
                    Font::new(size::TICK, theme::INK_MUTED),
                    Align::Centre,
                    Baseline::Middle,
                )?;
            }
        }
        Ok(())
    })
}

/// The key as one line at the top: positive and negative weights. Returns its bottom.
fn draw_key(canvas: &draw::Canvas, x: f64, y: f64) -> Result<f64> {
    let font = Font::new(size::LEGEND, theme::INK_SOFT);
    let cy = y + 8.0;
    let mut px = x;
    for (colour, label) in [(POSITIVE, "positive weight"), (NEGATIVE, "negative weight")] {
        canvas.line(&[(px, cy), (px + 22.0, cy)], colour, 0.9, 3.0)?;
        canvas.text(label, px + 30.0, cy, font, Align::Left, Baseline::Middle)?;
        px += 30.0 + text_width(label, size::LEGEND) + 20.0;
    }
    Ok(y + 20.0)
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

    fn small() -> NetworkWeights {
        NetworkWeights {
            layer_sizes: vec![4, 6, 3],
            weights: vec![weights(4, 6, 1), weights(6, 3, 2)],
            input_names: Some(vec![
                "bore_um".into(),
                "roughness_um".into(),
                "inlet_temp_c".into(),
                "pressure_kpa".into(),
            ]),
            output_names: Some(vec!["pass".into(), "rework".into(), "scrap".into()]),
        }
    }

    #[test]
    fn small_network_with_names() {
        let chart = network_diagram(&small(), &ChartOptions::default()).unwrap();
        let r = check(&chart, "network-small");
        assert!(r.has_text("Network"));
        assert!(
            r.has_text("inputs (4)") && r.has_text("hidden 1 (6)") && r.has_text("outputs (3)")
        );
        assert!(r.has_text("bore (µm)") && r.has_text("inlet temp (°C)") && r.has_text("scrap"));
        assert!(r.has_text("positive weight") && r.has_text("negative weight"));
        // Every connection is a line, in one of the two sign colours.
        let positive = r.count("polyline", &[("stroke", &POSITIVE.to_svg())]);
        let negative = r.count("polyline", &[("stroke", &NEGATIVE.to_svg())]);
        assert_eq!(
            positive + negative,
            4 * 6 + 6 * 3 + 2,
            "connections plus the two key lines"
        );
        assert!(positive > 2 && negative > 2);
        assert_eq!(
            r.count("circle", &[("fill", &NODE_FILL.to_svg())]),
            4 + 6 + 3
        );
    }

    #[test]
    fn wide_layers_are_capped() {
        let network = NetworkWeights {
            layer_sizes: vec![30, 64, 2],
            weights: vec![weights(30, 64, 3), weights(64, 2, 4)],
            input_names: None,
            output_names: None,
        };
        let chart = network_diagram(&network, &ChartOptions::default()).unwrap();
        let r = check(&chart, "network-wide");
        assert!(r.has_text("+7 more") && r.has_text("+41 more"));
        assert!(r.has_text_containing("layers wider than 24 units show their first 23"));
        assert_eq!(
            r.count("circle", &[("fill", &NODE_FILL.to_svg())]),
            23 + 23 + 2
        );
    }

    #[test]
    fn deep_network_and_bad_weights() {
        let mut network = NetworkWeights {
            layer_sizes: vec![5, 8, 8, 8, 1],
            weights: vec![
                weights(5, 8, 1),
                weights(8, 8, 2),
                weights(8, 8, 3),
                weights(8, 1, 4),
            ],
            input_names: None,
            output_names: Some(vec!["P(fail)".into()]),
        };
        network.weights[1][[0, 0]] = f64::NAN;
        let chart = network_diagram(&network, &ChartOptions::default()).unwrap();
        let r = check(&chart, "network-deep");
        assert!(r.has_text("hidden 3 (8)") && r.has_text("skipped 1 non-finite weight"));
    }

    #[test]
    fn inconsistent_input_is_refused() {
        let options = ChartOptions::default();
        let mut n = small();
        n.layer_sizes = vec![4];
        assert!(network_diagram(&n, &options).is_err());
        let mut n = small();
        n.weights.pop();
        assert!(network_diagram(&n, &options)
            .unwrap_err()
            .to_string()
            .contains("weight matrices"));
        let mut n = small();
        n.weights[1] = weights(5, 3, 0);
        let err = network_diagram(&n, &options).unwrap_err();
        assert!(err.to_string().contains("weights of layer 2"), "{err}");
        let mut n = small();
        n.output_names = Some(vec!["one".into()]);
        assert!(network_diagram(&n, &options)
            .unwrap_err()
            .to_string()
            .contains("output name"));
        let mut n = small();
        n.layer_sizes[1] = 0;
        assert!(network_diagram(&n, &options).is_err());
    }

    #[test]
    fn output_is_byte_identical() {
        let a = network_diagram(&small(), &ChartOptions::default()).unwrap();
        let b = network_diagram(&small(), &ChartOptions::default()).unwrap();
        assert_eq!(a.as_svg(), b.as_svg());
    }
}
