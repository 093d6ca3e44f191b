use termsight::radial::*;
fn main() {
    let cases: Vec<(u32, &str, f64)> = std::env::args().nth(1).map(|a| {
        let v: Vec<&str> = a.split(':').collect();
        vec![(v[0].parse().unwrap(), Box::leak(v[1].to_string().into_boxed_str()) as &str, 0.0)]
    }).unwrap_or(vec![
        (2, "1s2", -2.8616800), (4, "1s2 2s2", -14.5730232), (10, "1s2 2s2 2p6", -128.5470981),
        (18, "1s2 2s2 2p6 3s2 3p6", -526.8175128), (3, "1s2 2s", -7.4327257), (11, "1s2 2s2 2p6 3s", -161.8589116),
    ]);
    let step: f64 = std::env::var("STEP").ok().map(|s| s.parse().unwrap()).unwrap_or(64.0);
    for (z, c, reference) in cases {
        let config = c.parse().unwrap();
        let mut opts = ScfOptions::default();
        opts.grid.step = 1.0 / step; if let Ok(r) = std::env::var("RMAX") { opts.grid.r_max_bohr = r.parse().unwrap(); }
        let t = std::time::Instant::now();
        let verbose = std::env::var("V").is_ok();
        let t0 = std::time::Instant::now();
        let mut obs = |p: &ScfProgress| if verbose {eprint!("{:?} ", t0.elapsed()); eprintln!("{:?} {} E={:.10} dE={:.2e} res={:.2e} d={}", p.stage, p.iteration, p.total_energy_hartree, p.energy_change_hartree, p.residual, p.damping) };
        match hartree_fock(z, &config, &opts, &mut obs) {
            Ok(s) => {
                println!("Z={z} {c}: E={:.9} ref={reference} rel={:.2e} virial-2={:.2e} it={} res={:.1e} N={} t={:?}", s.energy.total_hartree, (s.energy.total_hartree-reference)/reference.abs(), s.energy.virial_ratio()-2.0, s.iterations, s.residual, s.grid.len(), t.elapsed());
                for o in &s.orbitals { println!("   {} eps={:.8} nodes={}", o.label(), o.energy_hartree, o.nodes());
                    let r = s.grid.r();
                    for i in 1..o.p.len() { if o.p[i]*o.p[i-1] < 0.0 { println!("      sign change at r={:.3e} p={:.3e} {:.3e}", r[i], o.p[i-1], o.p[i]); } }
                }
            }
            Err(e) => println!("Z={z} {c}: error {e} t={:?}", t.elapsed()),
        }
    }
}
