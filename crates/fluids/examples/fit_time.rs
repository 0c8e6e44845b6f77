//! Times the one-off fit of the fast saturation curves of every fluid (run with --release).

use fluids::{FluidId, fluid};

fn main() {
    for id in FluidId::ALL {
        let f = fluid(id);
        let start = std::time::Instant::now();
        match f.prepare() {
            Ok(info) => println!(
                "{id}: {:.1} ms, {} forward pieces, {} full solutions",
                start.elapsed().as_secs_f64() * 1e3,
                info.forward_pieces,
                info.full_solutions
            ),
            Err(e) => println!("{id}: {e}"),
        }
    }
}
