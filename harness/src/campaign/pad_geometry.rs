//! Pin neighbours from pad geometry: where a board file gives a device's
//! pad centres (`pads:`), two pins are neighbours when their pads lie
//! within the board's `bridge_distance_mm`; otherwise the pin-name rule of
//! [`adjacent_pairs`] (leaded numbers, ball-grid rows and columns) holds.

use std::collections::BTreeMap;

use virtual_board::{LoadedBoard, DEFAULT_BRIDGE_DISTANCE_MM};

use super::universe::{adjacent_pairs, adjacent_pairs_as};

/// Pairs of pins whose pad centres are at most `within` millimetres apart,
/// each pair once, the lesser pin name first, sorted.
pub fn pairs_within(pads: &BTreeMap<String, [f64; 2]>, within: f64) -> Vec<(String, String)> {
    // Sweep by x: only pads whose x lies within `within` can be close.
    let mut by_x: Vec<(&str, [f64; 2])> = pads
        .iter()
        .filter(|(_, p)| p.iter().all(|v| v.is_finite()))
        .map(|(k, p)| (k.as_str(), *p))
        .collect();
    by_x.sort_by(|a, b| a.1[0].total_cmp(&b.1[0]).then(a.0.cmp(b.0)));
    let mut out = Vec::new();
    for (i, &(a, pa)) in by_x.iter().enumerate() {
        for &(b, pb) in &by_x[i + 1..] {
            if pb[0] - pa[0] > within {
                break;
            }
            let (dx, dy) = (pb[0] - pa[0], pb[1] - pa[1]);
            if (dx * dx + dy * dy).sqrt() <= within {
                out.push(if a < b {
                    (a.to_string(), b.to_string())
                } else {
                    (b.to_string(), a.to_string())
                });
            }
        }
    }
    out.sort();
    out
}

/// The neighbouring pins of device `designator` of a loaded board, for the
/// adjacent-short class: by pad distance when the board file gives its
/// pads, else by its stated package style, else by its pin names.
pub fn device_neighbours(loaded: &LoadedBoard, designator: &str) -> Vec<(String, String)> {
    let board = &loaded.board;
    let entry = loaded.file.devices.get(designator);
    if let Some(e) = entry.filter(|e| !e.pads.is_empty()) {
        let within = loaded
            .file
            .bridge_distance_mm
            .unwrap_or(DEFAULT_BRIDGE_DISTANCE_MM);
        return pairs_within(&e.pads, within);
    }
    let Some(i) = board.device_index(designator) else {
        return Vec::new();
    };
    let pins: Vec<String> = board.devices()[i]
        .model()
        .pin_map()
        .keys()
        .cloned()
        .collect();
    match entry.and_then(|e| e.package_style) {
        Some(style) => adjacent_pairs_as(&pins, style),
        None => adjacent_pairs(&pins),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pairs_within_a_distance() {
        // Four pads placed by hand (mm): 1 (0, 0), 2 (1.27, 0), 3 (2.54, 0),
        // 4 (1.27, 1.0). Distances, worked by hand: 1–2 1.27; 2–3 1.27;
        // 2–4 1.00; 1–3 2.54; 1–4 √(1.27² + 1²) = √2.6129 ≈ 1.616; 3–4 the
        // same 1.616. Within 1.3 mm: 1–2, 2–3, 2–4.
        let pads: BTreeMap<String, [f64; 2]> = [
            ("1", [0.0, 0.0]),
            ("2", [1.27, 0.0]),
            ("3", [2.54, 0.0]),
            ("4", [1.27, 1.0]),
        ]
        .into_iter()
        .map(|(k, v)| (k.to_string(), v))
        .collect();
        let s = |a: &str, b: &str| (a.to_string(), b.to_string());
        assert_eq!(
            pairs_within(&pads, 1.3),
            vec![s("1", "2"), s("2", "3"), s("2", "4")]
        );
        // Within 1.7 mm the diagonals join (1.616); 1–3 (2.54) still not.
        assert_eq!(
            pairs_within(&pads, 1.7),
            vec![
                s("1", "2"),
                s("1", "4"),
                s("2", "3"),
                s("2", "4"),
                s("3", "4")
            ]
        );
        assert!(pairs_within(&pads, 0.5).is_empty());
    }
}
