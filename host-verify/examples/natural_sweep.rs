//! Within-1-LSB share of the warp kernels on the demo scenes and the
//! natural photographs, by fractional bits `F` and path (pixel map; control
//! grids with points every 8 and 16 pixels), worst image per class: the
//! table in the README that picks the default fractional bits.
//!
//! ```sh
//! cargo run --release -p fixsight-verify --example natural_sweep
//! ```

use fixsight_verify::natural::{all_scenes, rms_contrast};
use fixsight_verify::scene::SceneClass;
use fixsight_verify::warp::check::within_1lsb_share;

fn main() -> Result<(), String> {
    let scenes = all_scenes();
    let paths: [(&str, Option<u32>); 3] = [
        ("pixel map", None),
        ("grid 8", Some(3)),
        ("grid 16", Some(4)),
    ];
    println!("RMS contrast per image:");
    for s in &scenes {
        println!("  {} ({}): {:.1}", s.name, s.class.name(), rms_contrast(s));
    }
    println!();
    print!("| F | path |");
    for c in SceneClass::ALL {
        print!(" {} |", c.name());
    }
    println!(" worst image |");
    println!("|---|---|---:|---:|---:|---|");
    for f in 4..=9u32 {
        for (label, k) in paths {
            let mut per = Vec::new();
            for s in &scenes {
                per.push((s.class, s.name, within_1lsb_share(s, f, k)?));
            }
            print!("| {f} | {label} |");
            for c in SceneClass::ALL {
                let w = per
                    .iter()
                    .filter(|p| p.0 == c)
                    .map(|p| p.2)
                    .fold(1f64, f64::min);
                print!(" {:.3} % |", 100.0 * w);
            }
            let worst = per
                .iter()
                .min_by(|a, b| a.2.total_cmp(&b.2))
                .expect("scenes exist");
            println!(" {} {:.3} % |", worst.1, 100.0 * worst.2);
        }
    }
    Ok(())
}
