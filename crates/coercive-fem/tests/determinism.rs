//! Results are bit-identical whatever the number of threads.

use coercive_fem::{
    BhCurve, ElementOrder, Formulation, Material, Model, ScalarField, SoftMagnetic,
};
use coercive_mesh::structured::rectangle;

fn solve_with_threads(threads: usize, order: ElementOrder) -> (Vec<f64>, f64, usize) {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap();
    pool.install(|| {
        // 120 x 120 cells: 28,800 triangles, several assembly chunks.
        let mesh = rectangle(0.0, 0.0, 0.1, 0.1, 120, 120, "steel").unwrap();
        let model = Model::builder(mesh, Formulation::Planar { depth_m: 0.1 })
            .order(order)
            .material(
                "steel",
                Material::Soft(SoftMagnetic {
                    curve: BhCurve::saturating(1.8, 200.0).unwrap(),
                }),
            )
            .current_density_field(
                "steel",
                ScalarField::new(|p| 3e6 * (30.0 * p.x).sin() * (1.0 + 10.0 * p.y)),
            )
            .fixed_potential("bottom", 0.0)
            .fixed_potential("top", 0.0)
            .build()
            .unwrap();
        let sol = model.solve().unwrap();
        (
            sol.potential().to_vec(),
            sol.energy(),
            sol.newton_report().iterations,
        )
    })
}

#[test]
fn one_and_two_threads_give_bit_identical_nonlinear_solutions() {
    for order in [ElementOrder::P1, ElementOrder::P2] {
        let (a1, w1, n1) = solve_with_threads(1, order);
        let (a2, w2, n2) = solve_with_threads(2, order);
        assert!(n1 >= 2, "the case should be nonlinear enough to iterate");
        assert_eq!(n1, n2);
        assert_eq!(w1.to_bits(), w2.to_bits());
        assert!(a1.iter().zip(&a2).all(|(x, y)| x.to_bits() == y.to_bits()));
    }
}
