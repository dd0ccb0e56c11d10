//! Placing charts into the free space of a layout whose charts stay where they are.
//!
//! The charts already laid out are rasterised at the texture's resolution and
//! dilated by the padding; the new charts are then placed bottom-left first-fit,
//! largest first, exactly as [`super::pack`] places charts, but at a given scale.
//! When they do not fit at that scale, the scale shrinks by [`super::SHRINK`] until
//! they do.

use nalgebra::Point2;

use super::{
    attempt_on, grid, placements, prepare, prepare_all, raster, too_many, ChartPolygons, Layout,
    Order, Placement, Plan, Rule, SHRINK,
};
use crate::error::Result;

/// Places `charts` (UV area = 3D area, as for [`super::pack`]) into the unit square
/// around `placed` (charts already in their final unit-square UVs, never moved),
/// keeping `padding` texels from them, from each other and from the border at
/// `resolution`. Each chart gets the scale `scale` (unit-square UV units per 3D
/// unit), or a smaller one when the free space is too small: every placement
/// carries the scale it got. Errors when a chart is malformed (see
/// [`super::pack`]) or nothing fits even at a scale of under one texel per chart.
pub fn place_around(
    placed: &[ChartPolygons],
    charts: &[ChartPolygons],
    scale: f64,
    resolution: u32,
    padding: u32,
) -> Result<Vec<Placement>> {
    let layout = Layout::new(resolution, padding)?;
    let prepared = prepare_all(charts)?;
    if prepared.is_empty() {
        return Ok(Vec::new());
    }
    let mut taken = grid::Grid::new(layout.size);
    let k = layout.cells_per_uv;
    for (i, chart) in placed.iter().enumerate() {
        let regions: Vec<Vec<[Point2<f64>; 2]>> = prepare(i, chart)?
            .regions
            .iter()
            .map(|r| {
                r.iter()
                    .map(|[a, b]| [Point2::from(a.coords * k), Point2::from(b.coords * k)])
                    .collect()
            })
            .collect();
        let mask = raster::rasterize_regions(
            regions.iter().map(|r| r.as_slice()),
            layout.size,
            layout.size,
        );
        taken.occupy(&mask.dilate(layout.margin), -layout.margin, -layout.margin);
    }
    let plan = Plan {
        order: Order::Area.sorted(&prepared),
        rule: Rule::Top,
    };
    let longest = prepared.iter().map(|p| p.rect.width).fold(0.0, f64::max);
    let mut scale = scale;
    loop {
        if let Some(spots) = attempt_on(taken.clone(), &prepared, &plan, layout, scale) {
            return Ok(placements(&spots, prepared.len(), scale));
        }
        if !(scale * longest * k >= 1.0) {
            return Err(too_many(layout));
        }
        scale *= SHRINK;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn square(x: f64, y: f64, side: f64) -> ChartPolygons {
        ChartPolygons {
            points: vec![
                Point2::new(x, y),
                Point2::new(x + side, y),
                Point2::new(x + side, y + side),
                Point2::new(x, y + side),
            ],
            faces: vec![vec![0, 1, 2, 3]],
        }
    }

    #[test]
    fn new_charts_go_beside_the_placed_ones_at_the_given_scale() {
        // The left half of the square is taken; a 0.3-wide chart must go right of it,
        // 4 texels of 256 (0.015625) from it.
        let placed = [square(0.0, 0.0, 0.5)];
        let new = [square(0.0, 0.0, 3.0)];
        let p = place_around(&placed, &new, 0.1, 256, 4).unwrap();
        assert_eq!(p.len(), 1);
        assert_eq!(p[0].scale, 0.1);
        let corners: Vec<Point2<f64>> = new[0].points.iter().map(|q| p[0].apply(q)).collect();
        let min_x = corners.iter().map(|q| q.x).fold(f64::INFINITY, f64::min);
        let min_y = corners.iter().map(|q| q.y).fold(f64::INFINITY, f64::min);
        assert!(
            min_x >= 0.5 + 4.0 / 256.0 || min_y >= 0.5 + 4.0 / 256.0,
            "{corners:?}"
        );
        for q in &corners {
            assert!(
                q.x <= 1.0 && q.y <= 1.0 && q.x >= 0.0 && q.y >= 0.0,
                "{q:?}"
            );
        }
    }

    #[test]
    fn a_chart_too_big_for_the_free_space_is_shrunk() {
        let placed = [square(0.0, 0.0, 0.7)];
        let new = [square(0.0, 0.0, 1.0)];
        let p = place_around(&placed, &new, 0.5, 256, 2).unwrap();
        assert!(p[0].scale < 0.3 && p[0].scale > 0.2, "{}", p[0].scale);
    }
}
