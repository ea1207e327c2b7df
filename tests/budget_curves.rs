//! Budget curves from one analysis (`underdraw::cut::cut_budgets`, used by
//! `sweep` and the scene's `--vertex-total`): each budget's cut must be
//! exactly the independent `cut_sampled` at that budget (mesh and notes),
//! on demo layers of different kinds, with both filters, mip levels and
//! wrapping. The independent cut is the reference: it runs every stage
//! again from the PNG's alpha.

use std::path::PathBuf;
use underdraw::alpha::Sampled;
use underdraw::cut::{cut_budgets, cut_sampled};
use underdraw::io::load_alpha;
use underdraw::settings::{CutSettings, Filter, FilterMode, Wrap};
use underdraw::sweep::sweep_layer;

fn demo(name: &str) -> underdraw::alpha::AlphaMap {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    load_alpha(&root.join("demo-layers").join(name)).expect("a demo layer")
}

fn same_as_independent_cuts(name: &str, base: CutSettings, budgets: &[usize]) {
    let map = demo(name);
    let curve = cut_budgets(Sampled::source(&map), name, &base, budgets);
    assert_eq!(curve.len(), budgets.len());
    for (out, &budget) in curve.iter().zip(budgets) {
        let one = cut_sampled(Sampled::source(&map), name, &CutSettings { budget, ..base });
        assert_eq!(out.mesh, one.mesh, "{name} at {budget}");
        assert_eq!(out.notes, one.notes, "{name} at {budget}");
        assert_eq!(out.mesh.budget, Some(budget));
    }
    // the cuts differ from budget to budget, or the comparison shows little
    assert!(
        curve.windows(2).any(|w| w[0].mesh != w[1].mesh),
        "{name}: every budget gave one mesh"
    );
}

#[test]
fn soft_layers_bilinear() {
    same_as_independent_cuts("houses.png", CutSettings::default(), &[6, 16, 64, 192]);
    same_as_independent_cuts("masts.png", CutSettings::default(), &[8, 24, 96]);
}

#[test]
fn nearest_with_mip_levels_and_wrap() {
    let nearest = CutSettings {
        filter: Filter {
            mode: FilterMode::Nearest,
            mip_levels: 2,
        },
        ..CutSettings::default()
    };
    same_as_independent_cuts("ui-button.png", nearest, &[4, 12, 32, 128]);
    let wrapped = CutSettings {
        wrap: Wrap::X,
        ..CutSettings::default()
    };
    same_as_independent_cuts("fog.png", wrapped, &[8, 32, 128]);
}

#[test]
fn the_sweep_reports_the_independent_cuts() {
    let map = demo("pier.png");
    let budgets = [4, 16, 48, 256];
    let points = sweep_layer(&map, "pier.png", &CutSettings::default(), &budgets);
    for (p, &budget) in points.iter().zip(&budgets) {
        let one = cut_sampled(
            Sampled::source(&map),
            "pier.png",
            &CutSettings {
                budget,
                ..CutSettings::default()
            },
        );
        assert_eq!(p.budget, budget);
        assert_eq!(p.vertices, one.mesh.vertex_count());
        assert_eq!(p.opaque_area, one.mesh.stats.opaque_area + 0.0);
        assert_eq!(p.covered_area, one.mesh.stats.covered_area + 0.0);
    }
}
