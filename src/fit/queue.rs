//! The fitter's queue: candidate edits ranked by cost per vertex saved,
//! re-evaluated lazily when what they depend on has changed.

use super::*;
use std::cmp::Ordering;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum OpKind {
    Remove,
    Collapse,
    DropComp,
    FillHole,
    RectComp,
    BoxComp,
    MergeComp,
}

#[derive(Clone)]
pub(super) struct Cand {
    pub(super) key: f64,
    pub(super) kind: OpKind,
    pub(super) id: u32,
    pub(super) stamp: u32,
}
impl PartialEq for Cand {
    fn eq(&self, o: &Self) -> bool {
        self.cmp(o) == Ordering::Equal
    }
}
impl Eq for Cand {}
impl PartialOrd for Cand {
    fn partial_cmp(&self, o: &Self) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}
impl Ord for Cand {
    // BinaryHeap is a max-heap: the smallest key must compare greatest.
    fn cmp(&self, o: &Self) -> Ordering {
        o.key
            .total_cmp(&self.key)
            .then_with(|| o.id.cmp(&self.id))
            .then_with(|| (o.kind as u8).cmp(&(self.kind as u8)))
    }
}

/// An edit, evaluated: its cost (twice-area units, positive = worse) and the
/// distinct vertices it saves.
pub(super) struct Eval {
    pub(super) cost: i64,
    pub(super) saved: i64,
    /// Positions the edit stops sharing with the other class (their other
    /// use remains, so they are not saved yet): ranked as half a vertex
    /// each, so that where the opaque and covering outlines coincide each
    /// side can be simplified in turn.
    pub(super) shared: i64,
    pub(super) point: Point,
}

impl Fitter<'_> {
    pub(super) fn seed(&mut self) {
        self.heap.clear();
        for v in 0..self.verts.len() as u32 {
            if self.verts[v as usize].alive {
                self.push_vertex_ops(v);
            }
        }
        for c in 0..self.comps.len() as u32 {
            self.push_comp_op(c);
        }
        for r in 0..self.rings.len() as u32 {
            self.push_hole_op(r);
        }
    }

    pub(super) fn push(&mut self, kind: OpKind, id: u32, stamp: u32, e: &Eval) {
        let saved = e.saved as f64
            + if self.share_credit {
                0.5 * e.shared as f64
            } else {
                0.0
            };
        let key = if e.cost <= 0 {
            if e.cost == 0 && saved <= 0.0 {
                return;
            }
            e.cost as f64 - if saved > 0.0 { 0.5 } else { 0.0 }
        } else {
            if saved <= 0.0 {
                return;
            }
            if self.watch_cap && saved > (self.distinct as i64 - self.budget as i64).max(1) as f64 {
                // from here on the two rankings of large edits differ
                self.cap_diverged = true;
            }
            if self.cap_savings {
                // vertices saved beyond what the budget needs are worth nothing
                let need = (self.distinct as i64 - self.budget as i64).max(1) as f64;
                e.cost as f64 / saved.min(need)
            } else {
                e.cost as f64 / saved
            }
        };
        self.heap.push(Cand {
            key,
            kind,
            id,
            stamp,
        });
    }

    pub(super) fn push_vertex_ops(&mut self, v: u32) {
        let stamp = self.verts[v as usize].stamp;
        if let Some(e) = self.eval_remove(v) {
            self.push(OpKind::Remove, v, stamp, &e);
        }
        if let Some(e) = self.eval_collapse(v) {
            self.push(OpKind::Collapse, v, stamp, &e);
        }
    }
    pub(super) fn push_comp_op(&mut self, c: u32) {
        for kind in [
            OpKind::DropComp,
            OpKind::RectComp,
            OpKind::BoxComp,
            OpKind::MergeComp,
        ] {
            self.push_comp_kind(c, kind);
        }
    }
    pub(super) fn push_comp_kind(&mut self, c: u32, kind: OpKind) {
        let stamp = self.comps[c as usize].version;
        let e = match kind {
            OpKind::DropComp => self.eval_drop_comp(c),
            OpKind::RectComp => self.eval_rect_comp(c),
            OpKind::BoxComp => self.eval_box_comp(c),
            _ => self.eval_merge_comp(c).map(|(e, _, _)| e),
        };
        if let Some(e) = e {
            self.push(kind, c, stamp, &e);
        }
    }
    pub(super) fn push_hole_op(&mut self, r: u32) {
        if let Some(e) = self.eval_fill_hole(r) {
            let stamp = self.comps[self.rings[r as usize].comp as usize].version;
            self.push(OpKind::FillHole, r, stamp, &e);
        }
    }

    pub(super) fn run(&mut self, budget: usize) {
        while !(self.watch_cap && self.cap_diverged) {
            let Some(c) = self.heap.pop() else { break };
            if c.key > 0.0 && self.distinct <= budget {
                break;
            }
            match c.kind {
                OpKind::Remove | OpKind::Collapse => {
                    let v = &self.verts[c.id as usize];
                    if !v.alive || v.stamp != c.stamp {
                        continue;
                    }
                    let e = if c.kind == OpKind::Remove {
                        self.eval_remove(c.id)
                    } else {
                        self.eval_collapse(c.id)
                    };
                    let Some(e) = e else { continue };
                    if !self.still_best(&c, &e) {
                        continue;
                    }
                    if c.kind == OpKind::Remove {
                        self.apply_remove(c.id);
                    } else {
                        self.apply_collapse(c.id, e.point);
                    }
                }
                OpKind::DropComp | OpKind::RectComp | OpKind::BoxComp | OpKind::MergeComp => {
                    let comp = &self.comps[c.id as usize];
                    if !comp.alive {
                        continue;
                    }
                    if comp.version != c.stamp {
                        self.push_comp_kind(c.id, c.kind);
                        continue;
                    }
                    let e = match c.kind {
                        OpKind::DropComp => self.eval_drop_comp(c.id),
                        OpKind::RectComp => self.eval_rect_comp(c.id),
                        OpKind::BoxComp => self.eval_box_comp(c.id),
                        _ => None, // merges are re-evaluated below
                    };
                    if let Some(e) = e {
                        if !self.still_best(&c, &e) {
                            continue;
                        }
                    }
                    match c.kind {
                        OpKind::DropComp => self.apply_drop_comp(c.id),
                        OpKind::RectComp => {
                            let r = self.comps[c.id as usize].rect.take().expect("a rectangle");
                            self.replace_comp(c.id, r);
                        }
                        OpKind::MergeComp => {
                            let Some((e, set, hull)) = self.eval_merge_comp(c.id) else {
                                continue;
                            };
                            if !self.still_best(&c, &e) {
                                continue;
                            }
                            self.apply_merge(c.id, &set, &hull);
                        }
                        _ => {
                            let Some(r) = self.comp_box(c.id) else {
                                continue;
                            };
                            if !self.box_is_clear(c.id, r) {
                                continue;
                            }
                            self.replace_comp(c.id, r);
                        }
                    }
                }
                OpKind::FillHole => {
                    let r = &self.rings[c.id as usize];
                    if !r.alive {
                        continue;
                    }
                    if self.comps[r.comp as usize].version != c.stamp {
                        self.push_hole_op(c.id);
                        continue;
                    }
                    let Some(e) = self.eval_fill_hole(c.id) else {
                        continue;
                    };
                    if !self.still_best(&c, &e) {
                        continue;
                    }
                    self.apply_fill_hole(c.id);
                }
            }
        }
    }

    /// Re-queues the candidate when its key changed since it was queued.
    pub(super) fn still_best(&mut self, c: &Cand, e: &Eval) -> bool {
        let stamp = c.stamp;
        let before = self.heap.len();
        self.push(c.kind, c.id, stamp, e);
        if self.heap.len() == before {
            return false; // no longer worth doing
        }
        let top = self.heap.peek().unwrap();
        if top.id == c.id && top.kind == c.kind && top.key <= c.key + 1e-9 {
            self.heap.pop();
            true
        } else {
            false
        }
    }
}
