//! The built-in demo world: a warehouse floor with tape markings, seen by a
//! cart's forward camera through a wide-angle lens, with uneven light,
//! glare, worn tape and sensor noise. Everything is generated from a seed.
//!
//! Geometry: world X to the right, Y forward along the floor, Z up; the
//! camera sits `height_m` above the floor at the origin, pitched down by
//! `pitch_deg`. Each sensor pixel is traced back through the lens
//! ([`crate::lens`]) to a ray, intersected with the floor, shaded, and
//! supersampled 3x3. Rays above the horizon see a dim racking wall.

use crate::lens::{Camera, Intrinsics, LensModel};
use noise::{Fbm, MultiFractal, NoiseFn, Perlin};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

/// A rendered demo scene.
#[derive(Debug, Clone)]
pub struct Scene {
    /// Short name (used in reports and golden ids).
    pub name: &'static str,
    /// What it shows.
    pub description: &'static str,
    /// Seed it was generated from.
    pub seed: u64,
    /// Width in pixels.
    pub width: usize,
    /// Height in pixels.
    pub height: usize,
    /// Grey 8-bit image, row-major, stride = width.
    pub gray: Vec<u8>,
    /// The camera (intrinsics and lens) that took it (for the natural
    /// photographs: the demo camera, whose lens the warp checks undo).
    pub camera: Camera,
    /// What kind of image it is; the report shows each class separately.
    pub class: SceneClass,
}

/// Kind of a test image: the rendered demo floor scenes, or one of the
/// classes of natural photographs ([`crate::natural`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum SceneClass {
    /// Rendered warehouse floor (the demo scenes).
    Rendered,
    /// Natural photograph with sharp, high-contrast edges (RMS contrast
    /// above 50 grey levels).
    Sharp,
    /// Natural photograph of a low-contrast textured surface (RMS contrast
    /// below 45 grey levels).
    Texture,
}

impl SceneClass {
    /// Every class, in report order.
    pub const ALL: [SceneClass; 3] = [SceneClass::Rendered, SceneClass::Sharp, SceneClass::Texture];

    /// The name used in the report.
    pub fn name(self) -> &'static str {
        match self {
            SceneClass::Rendered => "rendered",
            SceneClass::Sharp => "sharp",
            SceneClass::Texture => "texture",
        }
    }
}

/// How a scene is set up.
#[derive(Debug, Clone, Copy)]
pub struct SceneSpec {
    /// Name.
    pub name: &'static str,
    /// Description.
    pub description: &'static str,
    /// Seed.
    pub seed: u64,
    /// Tape centre line `X = a + b Y + c Y^2` (metres).
    pub tape: (f64, f64, f64),
    /// Distance of a dashed stop line across the aisle, if any (metres).
    pub stop_line_m: Option<f64>,
    /// Wear: share of tape area rubbed off, 0..1.
    pub wear: f64,
    /// Overall light level, 0..1.
    pub light: f64,
    /// Lamp position on the floor (X, Y), metres.
    pub lamp: (f64, f64),
    /// Glare spot in the image (u, v as fractions of size) and strength.
    pub glare: Option<(f64, f64, f64)>,
    /// Sensor read-noise standard deviation, DN.
    pub noise_dn: f64,
}

/// The demo scenes' specifications.
pub const DEMO_SPECS: [SceneSpec; 3] = [
    SceneSpec {
        name: "aisle-straight",
        description: "straight tape down a lit aisle, light sensor noise",
        seed: 0x5EED_0001,
        tape: (0.15, 0.02, 0.0),
        stop_line_m: None,
        wear: 0.1,
        light: 0.9,
        lamp: (0.5, 3.0),
        glare: None,
        noise_dn: 2.0,
    },
    SceneSpec {
        name: "bend-glare",
        description: "tape bending right under a lamp with a glare spot",
        seed: 0x5EED_0002,
        tape: (-0.2, 0.05, 0.06),
        stop_line_m: Some(1.3),
        wear: 0.2,
        light: 0.8,
        lamp: (1.0, 2.0),
        glare: Some((0.7, 0.35, 140.0)),
        noise_dn: 3.0,
    },
    SceneSpec {
        name: "worn-dim",
        description: "worn tape in a dim aisle, strong noise",
        seed: 0x5EED_0003,
        tape: (0.05, -0.04, -0.02),
        stop_line_m: Some(1.0),
        wear: 0.45,
        light: 0.6,
        lamp: (-0.8, 2.0),
        glare: None,
        noise_dn: 4.5,
    },
];

/// Width of the demo scenes (QVGA).
pub const DEMO_WIDTH: usize = 320;
/// Height of the demo scenes (QVGA).
pub const DEMO_HEIGHT: usize = 240;

/// The demo camera: wide-angle (about 100 degrees horizontally) with
/// barrel distortion.
pub fn demo_camera(width: usize, height: usize) -> Camera {
    let f = 0.42 * width as f64;
    Camera {
        intrinsics: Intrinsics {
            fx: f,
            fy: f,
            cx: (width as f64 - 1.0) / 2.0,
            cy: (height as f64 - 1.0) / 2.0,
        },
        lens: LensModel::BrownConrady {
            k1: -0.22,
            k2: 0.045,
            k3: 0.0,
            p1: 0.0004,
            p2: -0.0002,
        },
    }
}

/// Camera height above the floor, metres.
pub const CAMERA_HEIGHT_M: f64 = 0.45;
/// Camera pitch below the horizon, degrees.
pub const CAMERA_PITCH_DEG: f64 = 30.0;
/// Tape width, metres.
pub const TAPE_WIDTH_M: f64 = 0.05;
/// Grey level of clean tape before lighting.
pub const TAPE_ALBEDO: f64 = 228.0;

/// The three built-in demo scenes at QVGA.
pub fn demo_scenes() -> Vec<Scene> {
    DEMO_SPECS
        .iter()
        .map(|s| render(s, DEMO_WIDTH, DEMO_HEIGHT))
        .collect()
}

/// Smooth step from 0 (at `e0`) to 1 (at `e1`).
pub fn smoothstep(e0: f64, e1: f64, x: f64) -> f64 {
    // The two flat ends, exactly as the formula gives them (0 and 1),
    // without its division.
    if e0 < e1 && x <= e0 {
        return 0.0;
    }
    if e0 < e1 && x >= e1 {
        return 1.0;
    }
    let t = ((x - e0) / (e1 - e0)).clamp(0.0, 1.0);
    t * t * (3.0 - 2.0 * t)
}

/// Direction of the ray through undistorted normalised camera coordinates
/// `(x, y)` in the floor frame of the camera (X right, Y forward along the
/// floor, Z up), for a camera pitched down by the angle whose sine and
/// cosine are `sp`, `cp`. Not normalised: its camera-axis component is 1.
pub fn floor_ray(x: f64, y: f64, sp: f64, cp: f64) -> (f64, f64, f64) {
    (x, -y * sp + cp, -y * cp - sp)
}

/// Off-axis fall-off of the optics at undistorted normalised coordinates:
/// a softened cos^4 law, `1/(1 + 0.3 r^2)^2`.
pub fn vignette(x: f64, y: f64) -> f64 {
    1.0 / (1.0 + 0.3 * (x * x + y * y)).powi(2)
}

/// The floor's procedural textures, generated from a seed: concrete
/// brightness and the pattern of rubbed-off tape.
pub struct FloorTexture {
    concrete: Fbm<Perlin>,
    grit: Perlin,
    wear: Fbm<Perlin>,
}

impl FloorTexture {
    /// The textures of seed `seed`.
    pub fn new(seed: u64) -> Self {
        Self {
            concrete: Fbm::<Perlin>::new(seed as u32).set_octaves(4),
            grit: Perlin::new(seed as u32 ^ 0x9e37),
            wear: Fbm::<Perlin>::new(seed as u32 ^ 0x51ed).set_octaves(3),
        }
    }

    /// Concrete grey level (before lighting) at floor point `(px, py)`, metres.
    pub fn concrete(&self, px: f64, py: f64) -> f64 {
        118.0
            + 22.0 * self.concrete.get([px * 1.7, py * 1.7])
            + 7.0 * self.grit.get([px * 40.0, py * 40.0])
    }

    /// How much of the tape is rubbed off at `(px, py)` (0 intact .. 1
    /// worn) for a wear level `wear` (share of tape area rubbed off, 0..1).
    pub fn worn(&self, px: f64, py: f64, wear: f64) -> f64 {
        smoothstep(
            1.0 - 2.0 * wear - 0.1,
            1.0 - 2.0 * wear + 0.1,
            0.5 + 0.5 * self.wear.get([px * 9.0, py * 9.0]),
        )
    }
}

/// Tape coverage (0..1) of a floor point at distance `dist` (metres,
/// across the tape) from the centre line of a tape `width` metres wide:
/// the edge is softened over +-4 mm.
pub fn tape_cover(dist: f64, width: f64) -> f64 {
    1.0 - smoothstep(width / 2.0 - 0.004, width / 2.0 + 0.004, dist)
}

/// Light falling on floor point `(px, py)` from a lamp above floor point
/// `lamp`, at overall level `light`.
pub fn lamp_light(light: f64, lamp: (f64, f64), px: f64, py: f64) -> f64 {
    let (lx, ly) = lamp;
    let r2 = (px - lx).powi(2) + (py - ly).powi(2);
    light * (0.8 + 0.5 * (-r2 / (2.0 * 1.6 * 1.6)).exp())
}

/// One sensor reading of a pixel that receives `val` DN: shot noise
/// (variance `0.08 val`) plus read noise, rounded and clamped to 8 bits.
pub fn sensor_reading(mut val: f64, rng: &mut ChaCha8Rng, read: &Normal<f64>) -> u8 {
    let shot =
        Normal::new(0.0, (0.08 * val.max(0.0)).sqrt()).expect("shot sigma is finite and >= 0");
    val += shot.sample(rng) + read.sample(rng);
    val.round().clamp(0.0, 255.0) as u8
}

/// Renders a scene at the given size through the demo camera.
pub fn render(spec: &SceneSpec, width: usize, height: usize) -> Scene {
    render_through(spec, demo_camera(width, height), width, height)
}

/// Renders a scene at the given size through `camera` (its intrinsics in
/// pixels of that size); [`render`] is this with the demo camera.
pub fn render_through(spec: &SceneSpec, camera: Camera, width: usize, height: usize) -> Scene {
    let texture = FloorTexture::new(spec.seed);
    let (sp, cp) = CAMERA_PITCH_DEG.to_radians().sin_cos();
    let shade = |u: f64, v: f64| -> f64 {
        let (xd, yd) = camera.intrinsics.normalise(u, v);
        let (x, y) = match camera.lens.undistort(xd, yd) {
            Ok(p) => p,
            Err(_) => return 40.0,
        };
        let d = floor_ray(x, y, sp, cp);
        let vignette = vignette(x, y);
        if d.2 >= -1e-3 {
            // Racking wall above the horizon.
            let stripes = if (x * 6.0).rem_euclid(1.0) < 0.15 {
                25.0
            } else {
                0.0
            };
            return (55.0 + stripes) * vignette * spec.light;
        }
        let t = CAMERA_HEIGHT_M / -d.2;
        let (px, py) = (t * d.0, t * d.1);
        if py > 14.0 {
            return 60.0 * vignette * spec.light;
        }
        let base = texture.concrete(px, py);
        let (a, b, c) = spec.tape;
        let centre = a + b * py + c * py * py;
        // Distance to the tape centre line, measured across the tape.
        let slope = b + 2.0 * c * py;
        let dist = (px - centre).abs() / (1.0 + slope * slope).sqrt();
        let mut tape = tape_cover(dist, TAPE_WIDTH_M);
        if let Some(stop) = spec.stop_line_m {
            let across = tape_cover((py - stop).abs(), TAPE_WIDTH_M);
            let dashed = if (px * 2.5).rem_euclid(1.0) < 0.6 {
                1.0
            } else {
                0.0
            };
            tape = tape.max(across * dashed);
        }
        let worn = texture.worn(px, py, spec.wear);
        let tape = tape * (1.0 - 0.8 * worn);
        let albedo = base * (1.0 - tape) + TAPE_ALBEDO * tape;
        albedo * lamp_light(spec.light, spec.lamp, px, py) * vignette
    };
    let mut rng = ChaCha8Rng::seed_from_u64(spec.seed);
    let read = Normal::new(0.0, spec.noise_dn).expect("noise sigma is finite and >= 0");
    let mut gray = vec![0u8; width * height];
    for v in 0..height {
        for u in 0..width {
            let mut acc = 0.0;
            for sy in 0..3 {
                for sx in 0..3 {
                    acc += shade(
                        u as f64 + (sx as f64 - 1.0) / 3.0,
                        v as f64 + (sy as f64 - 1.0) / 3.0,
                    );
                }
            }
            let mut val = acc / 9.0;
            if let Some((gu, gv, strength)) = spec.glare {
                let du = u as f64 - gu * width as f64;
                let dv = v as f64 - gv * height as f64;
                let sigma = 0.06 * width as f64;
                val += strength * (-(du * du + dv * dv) / (2.0 * sigma * sigma)).exp();
            }
            gray[v * width + u] = sensor_reading(val, &mut rng, &read);
        }
    }
    Scene {
        name: spec.name,
        description: spec.description,
        seed: spec.seed,
        width,
        height,
        gray,
        camera,
        class: SceneClass::Rendered,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scenes_are_reproducible_and_textured() {
        let a = render(&DEMO_SPECS[1], 64, 48);
        let b = render(&DEMO_SPECS[1], 64, 48);
        assert_eq!(a.gray, b.gray);
        let mean = a.gray.iter().map(|&p| p as f64).sum::<f64>() / a.gray.len() as f64;
        let var = a
            .gray
            .iter()
            .map(|&p| (p as f64 - mean).powi(2))
            .sum::<f64>()
            / a.gray.len() as f64;
        assert!(mean > 30.0 && mean < 220.0, "mean {mean}");
        assert!(var > 25.0, "variance {var}");
    }

    /// The demo scenes' pixels are fixed: golden vectors and the report
    /// depend on them. SHA-256 of each QVGA scene's grey bytes.
    #[test]
    fn demo_scene_pixels_are_unchanged() {
        use sha2::{Digest, Sha256};
        let want = [
            "eb052aefcb0f1c4ffe210d43a8eeaf2dfcaaf6605a744c5ad4780956232ce27f",
            "f2b7a105c6ffbb98279be82c47862ef9d9b6ea871a3e741676db24c9b2b91efa",
            "800547a477f5102e613037fe374c03b6a0f9cf71b4b5ac4a383e4608f69781bf",
        ];
        for (s, w) in demo_scenes().iter().zip(want) {
            let d: String = Sha256::digest(&s.gray)
                .iter()
                .map(|b| format!("{b:02x}"))
                .collect();
            assert_eq!(d, w, "scene {}", s.name);
        }
    }
}
