//! Quick breakdown of where a smoother's time goes (not a benchmark; see benches/).
use std::time::Instant;
use trajweave_core::numeric::rng::Rng;
use trajweave_core::trend::curve::sort_by_x;
use trajweave_core::trend::kernel::{kernel_smooth, KernelOptions, KernelShape};

fn main() {
    let n: usize = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(1_000_000);
    let mut r = Rng::new(1, 0);
    let x: Vec<f64> = (0..n).map(|_| 10.0 * r.uniform()).collect();
    let y: Vec<f64> = x.iter().map(|&v| v.sin() + 0.3 * r.normal()).collect();
    for _ in 0..3 {
        let t = Instant::now();
        let s = sort_by_x(&x, &y);
        println!("sort {:?} ({})", t.elapsed(), s.0.len());
    }
    for shape in [KernelShape::Box, KernelShape::Gaussian] {
        let o = KernelOptions {
            bandwidth: Some(0.1),
            shape,
            ..Default::default()
        };
        let t = Instant::now();
        let c = kernel_smooth(&x, &y, &o).unwrap();
        println!("{shape:?} {:?} ({})", t.elapsed(), c.x.len());
    }
}
