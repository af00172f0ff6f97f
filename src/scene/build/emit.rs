//! Turning a placed annotation into display-list elements: the annotation
//! itself and, when it was moved away from its anchor, its leader.

use super::*;

impl Builder<'_> {
    /// Draw a placed annotation and record it.
    pub(super) fn emit(&mut self, p: Pending, placed: Placed, leader: bool) {
        let key = p.key();
        let content = p
            .variants
            .get(placed.variant as usize)
            .or(p.variants.first())
            .cloned()
            .unwrap_or_default();
        let rect = placed.rect;
        for prim in &content.prims {
            self.elements.push(Element {
                layer: p.layer,
                item: Some(p.item.clone()),
                primitive: translate(prim, rect.min),
            });
        }
        if leader {
            let target = Self::target(&p, &placed);
            self.push_leader(
                p.layer,
                &p.item,
                rect.nearest_point(target),
                target,
                p.colour,
            );
        }
        self.hits.push(HitRegion {
            item: p.item.clone(),
            layer: p.layer,
            shape: HitShape::Rect(rect),
        });
        self.annotations.push(PlacedAnnotation {
            layer: p.layer,
            item: p.item,
            key,
            rect,
            anchor: placed.anchor,
            placement: placed.placement,
        });
    }

    fn push_leader(&mut self, layer: Layer, item: &ItemRef, from: Point, to: Point, c: Colour) {
        let stroke = Stroke {
            colour: c,
            width: style::LEADER,
            dash: Some([0.3, 0.2]),
        };
        self.elements.push(Element {
            layer,
            item: Some(item.clone()),
            primitive: Primitive::Path(PathItem {
                shape: Shape::Polyline {
                    points: vec![from, to],
                    closed: false,
                },
                stroke: Some(stroke),
                fill: None,
            }),
        });
        // An open ring at the far end: not a junction dot (those are filled).
        self.elements.push(Element {
            layer,
            item: Some(item.clone()),
            primitive: Primitive::Path(PathItem {
                shape: Shape::Circle {
                    center: to,
                    radius: 0.16,
                },
                stroke: Some(Stroke {
                    dash: None,
                    ..stroke
                }),
                fill: Some(style::TAG_FILL),
            }),
        });
    }
}
