//! The demo sequence: a cart following floor tape down a warehouse aisle,
//! seen by its forward camera through the demo wide-angle lens, frame after
//! frame, with the true position of the tape known for every frame.
//!
//! > **Not a safety function.** The sequence exists to measure the marking,
//! > tracking and drift-warning stages against a known truth. Nothing here
//! > is a safety function; a vehicle that can hurt people needs
//! > safety-rated sensing and control under the applicable standards (for
//! > example ISO 3691-4, IEC 61508, ISO 13849) and local rules.
//!
//! # World
//!
//! World axes: X across the aisle (right), Y along it (forward), Z up,
//! metres. A straight tape of width `tape_width_m` runs along the aisle
//! with its centre line on `X = 0`. Around it:
//!
//! * the floor of [`crate::scene`] (concrete texture, tape albedo 228,
//!   worn patches from the same wear texture, lamp pools, vignetting,
//!   shot and read noise), anchored to the world so it streams past;
//! * a stretch `worn_stretch_m` of aisle where the tape is far more worn;
//! * floor joints: dark grooves 6 mm wide across the aisle every
//!   `joint_spacing_m` (first at `joint_first_m`) and one along it at
//!   `X = long_joint_x_m`;
//! * racking faces (the shelf edges) on the planes `X = +-racking_x_m`:
//!   dark uprights every 2.7 m, orange beams at 0.10..0.20 m and
//!   1.05..1.15 m, stored goods of varying grey between them;
//! * ceiling lamps every `lamp_spacing_m` along the aisle at
//!   `X = lamp_x_m`, `lamp_height_m` up: each lights a pool on the floor and
//!   leaves a glare patch (its mirror image on the polished floor, a
//!   Gaussian of 8 cm standard deviation on the floor, `glare_dn` at its
//!   peak) where the floor reflects it towards the camera;
//! * a passing object ([`Occluder`]): an upright panel a fixed distance
//!   ahead of the camera, crossing the aisle for a few frames.
//!
//! # Cart and camera
//!
//! The demo camera of [`crate::scene`] (`CAMERA_HEIGHT_M` up, pitched
//! `CAMERA_PITCH_DEG` down, lens [`crate::scene::demo_camera`]) rides on a
//! cart. At frame `k` the cart's heading, clockwise from the aisle seen
//! from above, is
//!
//! ```text
//! psi(k) = heading_deg + weave_deg * sin(2 pi k / weave_period)      (degrees)
//! ```
//!
//! and its position starts at `(start_offset_m, 0)` and moves
//! `speed_m` per frame along that heading:
//! `X(k+1) = X(k) + speed_m sin psi(k)`, `Y(k+1) = Y(k) + speed_m cos psi(k)`.
//! A positive heading makes the cart drift right, so the tape slides left
//! in the image and its right edge approaches the reference point.
//!
//! # Rendering
//!
//! Every sensor pixel is supersampled 3x3 as in [`crate::scene`]; the 9
//! rays go through the lens model once per sequence (a table of ray
//! directions) and are cast per frame against the occluder, the racking
//! planes and the floor (nearest hit wins). The floor's noise textures,
//! lamp light and glare are evaluated once per pixel, at the first of its
//! rays that reaches the floor (they vary slowly across a pixel); tape,
//! joint and racking geometry per ray. Then shot and read noise, from a
//! random stream seeded by `(seed, frame)`, so any frame renders alone
//! and alike in any order.
//!
//! # Truth (corrected view)
//!
//! Lines live in the **corrected view**: the pinhole of the fit-to-view
//! intrinsics of the demo lens at the sequence size
//! ([`crate::lens::Camera::fit_view`], the view the warp produces). A
//! line is `rho = x cos(theta) + y sin(theta)`, `x` right and `y` down in
//! pixels measured from an origin given by the caller (the image centre
//! `((W-1)/2, (H-1)/2)` by default, pixel centres at integers), `theta`
//! in `[0, pi)`.
//!
//! Each tape edge is the straight floor line `X = +-tape_width_m / 2`. Its
//! image is the trace of the plane through the camera centre and that
//! line: with two points `P1`, `P2` of the edge in camera coordinates
//! (`x` right, `y` down, `z` along the axis), `n = P1 x P2`, the image
//! line is `n_x x_n + n_y y_n + n_z = 0` in normalised coordinates, which
//! [`SequenceSpec::truth`] rewrites in pixels about the origin and
//! normalises to `theta` in `[0, pi)`. Nothing is fitted or sampled.
//!
//! The **reference point** is a pixel of the corrected view
//! (`reference_px`, the bottom-centre pixel in the demo). Its signed
//! distance to an edge line, positive on the tape's side, is that edge's
//! margin; the reference point crosses an edge between the last frame
//! with a positive margin and the first with a negative one
//! ([`SequenceTruth::crossing`]).
//!
//! The **visible share** of an edge is the share of its image points, one
//! per corrected row from the bottom row up to 8 rows below the horizon
//! and inside the view, whose ray reaches the floor before the occluder.
//! A frame is **occluded** when both edges have a visible share below 1/2.

use crate::lens::{Camera, Intrinsics};
use crate::scene::{
    demo_camera, floor_ray, lamp_light, sensor_reading, tape_cover, vignette, FloorTexture,
    CAMERA_HEIGHT_M, CAMERA_PITCH_DEG, TAPE_ALBEDO,
};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::Normal;
use std::f64::consts::PI;
use std::sync::OnceLock;

/// The passing object: an upright panel facing the camera.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Occluder {
    /// Frame (fractional) at which the panel's centre is on the tape's
    /// centre line `X = 0`.
    pub centre_frame: f64,
    /// Speed across the aisle, metres per frame (positive: to the right).
    pub speed_m: f64,
    /// Width across the aisle, metres.
    pub width_m: f64,
    /// Height above the floor, metres.
    pub height_m: f64,
    /// Distance ahead of the camera along the aisle, metres (it keeps
    /// pace with the cart).
    pub ahead_m: f64,
    /// Grey level of its face before lighting.
    pub albedo: f64,
}

impl Occluder {
    /// Lateral position of the panel's centre at frame `k`, metres.
    pub fn centre_x(&self, k: f64) -> f64 {
        (k - self.centre_frame) * self.speed_m
    }
}

/// How a sequence is set up (every length in metres, angle in degrees).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SequenceSpec {
    /// Short name.
    pub name: &'static str,
    /// What it shows.
    pub description: &'static str,
    /// Seed of the textures and the sensor noise.
    pub seed: u64,
    /// Number of frames.
    pub frames: usize,
    /// Sensor width, pixels.
    pub width: usize,
    /// Sensor height, pixels.
    pub height: usize,
    /// Distance travelled per frame.
    pub speed_m: f64,
    /// Lateral position of the camera at frame 0 (positive: right of the
    /// tape's centre line).
    pub start_offset_m: f64,
    /// Mean heading of the cart relative to the aisle, clockwise.
    pub heading_deg: f64,
    /// Amplitude of the steering weave.
    pub weave_deg: f64,
    /// Period of the steering weave, frames.
    pub weave_period: f64,
    /// Tape width.
    pub tape_width_m: f64,
    /// Wear of the tape, share of area rubbed off (0..1), as in
    /// [`crate::scene::SceneSpec::wear`].
    pub wear: f64,
    /// A stretch of aisle `(from Y, to Y)` where the tape's wear is
    /// `worn_stretch_wear`.
    pub worn_stretch_m: (f64, f64),
    /// Wear inside that stretch.
    pub worn_stretch_wear: f64,
    /// Overall light level (0..1).
    pub light: f64,
    /// Ceiling lamp spacing along the aisle (first lamp at half a spacing).
    pub lamp_spacing_m: f64,
    /// Lateral position of the lamp row.
    pub lamp_x_m: f64,
    /// Lamp height above the floor.
    pub lamp_height_m: f64,
    /// Peak grey-level added by a lamp's glare patch.
    pub glare_dn: f64,
    /// Sensor read-noise standard deviation, DN.
    pub noise_dn: f64,
    /// Racking faces at `X = +-racking_x_m`.
    pub racking_x_m: f64,
    /// Spacing of the joints across the aisle.
    pub joint_spacing_m: f64,
    /// Position along the aisle of the first joint across it.
    pub joint_first_m: f64,
    /// Lateral position of the joint along the aisle.
    pub long_joint_x_m: f64,
    /// The passing object.
    pub occluder: Occluder,
    /// Reference point, pixel of the corrected view `(u, v)`.
    pub reference_px: (f64, f64),
}

/// The demo sequence: 96 QVGA frames.
///
/// The cart runs at 4 cm per frame (1.2 m/s at 30 frames/s) with a
/// 0.65 degree heading error and a 0.25 degree weave of 40 frames, so it
/// drifts right by about 0.45 mm per frame; the occluder crosses the tape
/// around frame 36; the reference point is the bottom-centre pixel. The
/// figures this produces (crossing frame, occluded frames) are printed by
/// the `sequence` test and listed in the README.
pub const DEMO_SEQUENCE: SequenceSpec = SequenceSpec {
    name: "aisle-drift",
    description: "cart drifting right along worn floor tape, lamp glare, joints, racking, \
                  an object passing in front",
    seed: 0x5EED_0100,
    frames: 96,
    width: 320,
    height: 240,
    speed_m: 0.04,
    start_offset_m: -0.005,
    heading_deg: 0.65,
    weave_deg: 0.25,
    weave_period: 40.0,
    tape_width_m: 0.05,
    wear: 0.2,
    worn_stretch_m: (1.6, 2.1),
    worn_stretch_wear: 0.55,
    light: 0.85,
    lamp_spacing_m: 4.0,
    lamp_x_m: 0.35,
    lamp_height_m: 3.2,
    glare_dn: 110.0,
    noise_dn: 3.0,
    racking_x_m: 1.3,
    joint_spacing_m: 3.0,
    joint_first_m: 1.1,
    long_joint_x_m: -0.42,
    occluder: Occluder {
        centre_frame: 36.0,
        speed_m: 0.08,
        width_m: 0.4,
        height_m: 0.9,
        ahead_m: 0.16,
        albedo: 70.0,
    },
    reference_px: (159.5, 239.0),
};

/// Where the cart is at one frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pose {
    /// Camera position across the aisle, metres (0 on the tape's centre line).
    pub x_m: f64,
    /// Camera position along the aisle, metres.
    pub y_m: f64,
    /// Heading, radians, clockwise from the aisle direction.
    pub heading_rad: f64,
}

/// A line `rho = x cos(theta) + y sin(theta)` in corrected-view pixels
/// about some origin.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TruthLine {
    /// Distance term, pixels.
    pub rho: f64,
    /// Normal angle, radians, in `[0, pi)`.
    pub theta: f64,
    /// `true` when the image grows brighter along the normal
    /// `(cos theta, sin theta)` across this line (the tape side is along
    /// the normal).
    pub brighter_along_normal: bool,
}

impl TruthLine {
    /// The line in the shared integer units: `rho` in Q4 pixels (1/16 px,
    /// rounded to nearest, halves away from zero) and `theta` as a binary
    /// angle (65536 units = 180 degrees, rounded to nearest; a result of
    /// 65536 wraps to 0 with `rho` negated, the same line).
    pub fn quantised(&self) -> (i32, u16) {
        let mut t = (self.theta / PI * 65536.0).round() as i64;
        let mut rho = self.rho;
        if t >= 65536 {
            t -= 65536;
            rho = -rho;
        }
        ((rho * 16.0).round() as i32, t as u16)
    }

    /// `x` where the line crosses row `y` (both about the line's origin),
    /// or `None` for a horizontal line.
    pub fn x_at(&self, y: f64) -> Option<f64> {
        let (s, c) = self.theta.sin_cos();
        (c.abs() > 1e-12).then(|| (self.rho - y * s) / c)
    }

    /// Signed distance of point `(x, y)` from the line, positive along the
    /// normal.
    pub fn distance(&self, x: f64, y: f64) -> f64 {
        let (s, c) = self.theta.sin_cos();
        x * c + y * s - self.rho
    }
}

/// A line of the scene that is not a tape edge ([`SequenceSpec::clutter`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Clutter {
    /// What it is (`racking-base`, `beam`, `upright`, `joint-across`,
    /// `joint-along`, `occluder`).
    pub kind: &'static str,
    /// The line; `brighter_along_normal` is meaningful only when
    /// `polarity_known`.
    pub line: TruthLine,
    /// Whether the scene fixes which side is brighter.
    pub polarity_known: bool,
    /// Image length of the object's edge inside the view, pixels
    /// ([`SequenceSpec::image_length`]).
    pub length_px: f64,
}

/// Which tape edge.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// The edge on the left in the image.
    Left,
    /// The edge on the right in the image.
    Right,
}

/// The truth of one frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FrameTruth {
    /// Frame index.
    pub frame: usize,
    /// Cart pose.
    pub pose: Pose,
    /// The tape's edges, left then right in the image (ordered by `x` on
    /// the reference point's row), about the requested origin.
    pub edges: [TruthLine; 2],
    /// Signed distance, corrected pixels, from the reference point to each
    /// edge, positive on the tape's side.
    pub margin_px: [f64; 2],
    /// Visible share of each edge (see the module docs).
    pub visible: [f64; 2],
    /// Image length of each edge inside the view, pixels, occlusion not
    /// counted ([`SequenceSpec::image_length`] of the edge from the
    /// camera's position along the aisle to 30 m ahead).
    pub length_px: [f64; 2],
}

impl FrameTruth {
    /// Both edges less than half visible.
    pub fn occluded(&self) -> bool {
        self.visible[0] < 0.5 && self.visible[1] < 0.5
    }
}

/// The truth of a whole sequence.
#[derive(Debug, Clone, PartialEq)]
pub struct SequenceTruth {
    /// Every frame.
    pub frames: Vec<FrameTruth>,
}

/// When and where the reference point leaves the tape.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Crossing {
    /// The edge crossed.
    pub edge: Side,
    /// First frame whose reference point lies beyond that edge.
    pub frame: usize,
    /// Time of the crossing in frames, from linear interpolation of the
    /// margin between `frame - 1` and `frame`.
    pub time: f64,
}

impl SequenceTruth {
    /// The first frame whose reference point lies outside the tape (a
    /// negative margin on either edge after a frame with both positive),
    /// or `None` if it stays on the tape (or starts off it).
    pub fn crossing(&self) -> Option<Crossing> {
        let first = self.frames.first()?;
        if first.margin_px.iter().any(|&m| m <= 0.0) {
            return None;
        }
        self.frames.windows(2).find_map(|w| {
            (0..2)
                .find(|&e| w[1].margin_px[e] <= 0.0)
                .map(|e| Crossing {
                    edge: if e == 0 { Side::Left } else { Side::Right },
                    frame: w[1].frame,
                    time: w[0].frame as f64
                        + w[0].margin_px[e] / (w[0].margin_px[e] - w[1].margin_px[e]),
                })
        })
    }

    /// Frames where both edges are less than half visible.
    pub fn occluded_frames(&self) -> Vec<usize> {
        self.frames
            .iter()
            .filter(|f| f.occluded())
            .map(|f| f.frame)
            .collect()
    }
}

/// Light level of the racking and the far background before lighting.
const BACKGROUND: f64 = 45.0;
/// Rays are followed this far, metres.
const FAR_M: f64 = 30.0;
/// Supersampling per axis (as in `crate::scene`).
const SS: usize = 3;

/// One supersampling ray: direction in the camera's floor frame (see
/// [`floor_ray`]) and vignetting; `None` where the lens model does not
/// invert.
type Ray = Option<([f64; 3], f64)>;

/// A sequence ready to render: its spec, camera, corrected view and
/// (built on first use) its ray table.
#[derive(Debug)]
pub struct Sequence {
    spec: SequenceSpec,
    camera: Camera,
    view: Intrinsics,
    rays: OnceLock<Vec<Ray>>,
}

/// What a ray hits first.
enum Hit {
    Floor { x: f64, y: f64 },
    Rack { right: bool, y: f64, z: f64 },
    Panel { x: f64, z: f64 },
    Nothing,
}

/// SplitMix64 finaliser: a well-spread hash of a word.
fn mix(mut z: u64) -> u64 {
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

impl SequenceSpec {
    /// Cart pose at frame `k` (any `k`; the motion rule goes on past the
    /// last frame).
    pub fn pose(&self, k: usize) -> Pose {
        let heading = |j: usize| {
            (self.heading_deg + self.weave_deg * (2.0 * PI * j as f64 / self.weave_period).sin())
                .to_radians()
        };
        let (mut x, mut y) = (self.start_offset_m, 0.0);
        for j in 0..k {
            let (s, c) = heading(j).sin_cos();
            x += self.speed_m * s;
            y += self.speed_m * c;
        }
        Pose {
            x_m: x,
            y_m: y,
            heading_rad: heading(k),
        }
    }

    /// World point `(X, Y)` on the floor -> the camera's floor frame
    /// (right, forward) at pose `p`.
    fn to_camera_floor(p: &Pose, xw: f64, yw: f64) -> (f64, f64) {
        let (s, c) = p.heading_rad.sin_cos();
        let (dx, dy) = (xw - p.x_m, yw - p.y_m);
        (dx * c - dy * s, dx * s + dy * c)
    }

    /// World point `(X, Y, Z)` (Z up from the floor) -> camera coordinates
    /// (x right, y down, z along the axis) at pose `p`.
    fn to_camera(p: &Pose, w: [f64; 3]) -> [f64; 3] {
        let (sp, cp) = CAMERA_PITCH_DEG.to_radians().sin_cos();
        let (x, y) = Self::to_camera_floor(p, w[0], w[1]);
        let z = w[2] - CAMERA_HEIGHT_M;
        [x, -y * sp - z * cp, y * cp - z * sp]
    }

    /// Corrected-view pixel of world point `w` about `origin`, seen from
    /// pose `p`, if it is in front of the camera.
    pub fn project(
        p: &Pose,
        view: &Intrinsics,
        w: [f64; 3],
        origin: (f64, f64),
    ) -> Option<(f64, f64)> {
        let c = Self::to_camera(p, w);
        (c[2] > 1e-9).then(|| {
            (
                view.cx + view.fx * c[0] / c[2] - origin.0,
                view.cy + view.fy * c[1] / c[2] - origin.1,
            )
        })
    }

    /// The image line of the world line through points `a`, `b` (X, Y, Z
    /// with Z up from the floor), in the corrected view `view`, about
    /// `origin` (module docs).
    fn world_line(
        p: &Pose,
        view: &Intrinsics,
        a: [f64; 3],
        b: [f64; 3],
        origin: (f64, f64),
    ) -> TruthLine {
        let (p1, p2) = (Self::to_camera(p, a), Self::to_camera(p, b));
        let n = [
            p1[1] * p2[2] - p1[2] * p2[1],
            p1[2] * p2[0] - p1[0] * p2[2],
            p1[0] * p2[1] - p1[1] * p2[0],
        ];
        // With x_n = (X + ox - cx) / fx, y_n = (Y + oy - cy) / fy, times fx:
        // nx X + ny Y + k = 0 for X, Y in pixels about the origin.
        let (nx, ny) = (n[0], n[1] * view.fx / view.fy);
        let k = nx * (origin.0 - view.cx) + ny * (origin.1 - view.cy) + view.fx * n[2];
        let g = nx.hypot(ny);
        let (mut theta, mut rho) = (ny.atan2(nx), -k / g);
        if theta < 0.0 {
            theta += PI;
            rho = -rho;
        }
        if theta >= PI {
            theta -= PI;
            rho = -rho;
        }
        TruthLine {
            rho,
            theta,
            brighter_along_normal: false,
        }
    }

    /// The corrected view of this sequence (fit-to-view of the demo lens
    /// at the sequence size).
    pub fn view(&self) -> Result<Intrinsics, String> {
        demo_camera(self.width, self.height)
            .fit_view(self.width, self.height, self.width, self.height)
            .map_err(|e| e.to_string())
    }

    /// Ray of corrected-view pixel `(u, v)` in the camera's floor frame.
    fn view_ray(view: &Intrinsics, u: f64, v: f64) -> [f64; 3] {
        let (sp, cp) = CAMERA_PITCH_DEG.to_radians().sin_cos();
        let (x, y) = view.normalise(u, v);
        let d = floor_ray(x, y, sp, cp);
        [d.0, d.1, d.2]
    }

    /// What the ray `d` (camera floor frame) from the camera at pose `p`
    /// hits first at frame `k`; `(s, c)` are the sine and cosine of the
    /// heading.
    fn cast(&self, p: &Pose, (s, c): (f64, f64), k: usize, d: &[f64; 3]) -> Hit {
        let h = CAMERA_HEIGHT_M;
        // World-axis direction (the floor frame turned by the heading).
        let (wx, wy, wz) = (d[0] * c + d[1] * s, -d[0] * s + d[1] * c, d[2]);
        let mut best = (FAR_M / wy.abs().max(1e-9), Hit::Nothing);
        if wz < -1e-9 {
            let t = h / -wz;
            if t < best.0 {
                best = (
                    t,
                    Hit::Floor {
                        x: p.x_m + t * wx,
                        y: p.y_m + t * wy,
                    },
                );
            }
        }
        if wx.abs() > 1e-9 {
            let t = (wx.signum() * self.racking_x_m - p.x_m) / wx;
            if t > 0.0 && t < best.0 {
                let z = h + t * wz;
                if z >= 0.0 {
                    best = (
                        t,
                        Hit::Rack {
                            right: wx > 0.0,
                            y: p.y_m + t * wy,
                            z,
                        },
                    );
                }
            }
        }
        let o = &self.occluder;
        if wy > 1e-9 {
            let t = o.ahead_m / wy;
            let (x, z) = (p.x_m + t * wx, h + t * wz);
            if t < best.0
                && (x - o.centre_x(k as f64)).abs() <= o.width_m / 2.0
                && (0.0..=o.height_m).contains(&z)
            {
                best = (t, Hit::Panel { x, z });
            }
        }
        best.1
    }

    /// Light on the floor at world `(x, y)` from the two nearest lamps.
    fn floor_light(&self, x: f64, y: f64) -> f64 {
        let s = self.lamp_spacing_m;
        let i = ((y - s / 2.0) / s).floor();
        let near = [i, i + 1.0].map(|j| lamp_light(1.0, (self.lamp_x_m, s / 2.0 + j * s), x, y));
        // lamp_light(1, ..) = 0.8 + 0.5 e; sum the pools, keep one base.
        self.light * (near[0] + near[1] - 0.8)
    }

    /// Glare at world floor point `(x, y)` seen from pose `p`: each lamp's
    /// mirror image on the floor lies where the camera-lamp segment's
    /// reflection meets it, at `C + (L - C) h / (h + H)`.
    fn glare(&self, p: &Pose, x: f64, y: f64) -> f64 {
        let s = self.lamp_spacing_m;
        let share = CAMERA_HEIGHT_M / (CAMERA_HEIGHT_M + self.lamp_height_m);
        let first = ((p.y_m - s / 2.0) / s).floor();
        (0..4)
            .map(|j| {
                let ly = s / 2.0 + (first + j as f64) * s;
                let gx = p.x_m + (self.lamp_x_m - p.x_m) * share;
                let gy = p.y_m + (ly - p.y_m) * share;
                if gy <= p.y_m {
                    return 0.0;
                }
                let r2 = (x - gx).powi(2) + (y - gy).powi(2);
                self.glare_dn * (-r2 / (2.0 * 0.08 * 0.08)).exp()
            })
            .sum()
    }

    /// The tape's wear at world point `(x, y)`.
    fn wear_at(&self, y: f64) -> f64 {
        let (a, b) = self.worn_stretch_m;
        if (a..=b).contains(&y) {
            self.worn_stretch_wear
        } else {
            self.wear
        }
    }

    /// Racking face shade at height `z`, position `y` along the aisle, on
    /// side `right`.
    fn rack(&self, right: bool, y: f64, z: f64) -> f64 {
        let bay = 2.7;
        let along = (y - 0.6).rem_euclid(bay);
        if z > 2.4 {
            return BACKGROUND;
        }
        if along < 0.08 {
            return 60.0;
        }
        if (0.10..0.20).contains(&z) || (1.05..1.15).contains(&z) {
            return 150.0;
        }
        let level: u64 = if z < 1.05 { 0 } else { 1 };
        let idx = ((y - 0.6) / bay).floor() as i64;
        let hsh = mix(self.seed
            ^ (idx as u64).wrapping_mul(0x9e37_79b9)
            ^ (level << 40)
            ^ ((right as u64) << 41));
        if z < 0.10 {
            40.0
        } else {
            80.0 + (hsh % 90) as f64
        }
    }

    /// The truth of frame `k` with lines about `origin` (corrected-view
    /// pixels; the image centre is `((W-1)/2, (H-1)/2)`).
    pub fn truth(&self, view: &Intrinsics, k: usize, origin: (f64, f64)) -> FrameTruth {
        let p = self.pose(k);
        let half = self.tape_width_m / 2.0;
        let (ru, rv) = self.reference_px;
        let (rx, ry) = (ru - origin.0, rv - origin.1);
        // A tape centre point ahead, in the image, to orient the margins.
        let centre = Self::project(&p, view, [0.0, p.y_m + 1.0, 0.0], origin)
            .expect("a point 1 m ahead on the floor is in front of the camera");
        let mut edges = [-half, half].map(|x| {
            let mut l = Self::world_line(
                &p,
                view,
                [x, p.y_m + 1.0, 0.0],
                [x, p.y_m + 2.0, 0.0],
                origin,
            );
            l.brighter_along_normal = l.distance(centre.0, centre.1) > 0.0;
            l
        });
        let xr = |l: &TruthLine| l.x_at(ry).unwrap_or(f64::INFINITY);
        if xr(&edges[0]) > xr(&edges[1]) {
            edges.swap(0, 1);
        }
        let margin_px = edges.map(|l| {
            let d = l.distance(rx, ry);
            if l.brighter_along_normal {
                d
            } else {
                -d
            }
        });
        let visible = edges.map(|l| self.visible_share(view, &p, k, &l, origin));
        // Edge order in the image follows X here (the heading is small).
        let mut length_px = [-half, half]
            .map(|x| self.image_length(&p, view, [x, p.y_m, 0.0], [x, p.y_m + 30.0, 0.0]));
        if xr(&edges[0]) > xr(&edges[1]) {
            length_px.swap(0, 1);
        }
        FrameTruth {
            frame: k,
            pose: p,
            edges,
            margin_px,
            visible,
            length_px,
        }
    }

    /// The straight edges of the scene other than the tape, as lines of
    /// the corrected view about `origin` at frame `k`: what a line stage
    /// also finds and the marking selection must reject. Only lines that
    /// cross the view are listed, each with what it is and whether its
    /// polarity is fixed by the scene (a dark groove, upright or racking
    /// base: `brighter_along_normal` set accordingly) or not (beams against
    /// stored goods of any shade, the occluder's sides).
    ///
    /// | kind | world line |
    /// |---|---|
    /// | `racking-base` | `X = +-racking_x_m` on the floor |
    /// | `beam` | `X = +-racking_x_m` at heights 0.10, 0.20, 1.05, 1.15 m |
    /// | `upright` | vertical, at the two sides of each upright 1..12 m ahead |
    /// | `joint-across` | both sides (+-4.5 mm) of each joint 0.15..8 m ahead |
    /// | `joint-along` | both sides of the joint along the aisle |
    /// | `occluder` | the panel's two vertical sides, while it is ahead |
    pub fn clutter(&self, view: &Intrinsics, k: usize, origin: (f64, f64)) -> Vec<Clutter> {
        let p = self.pose(k);
        let mut out = Vec::new();
        let (w, h) = (self.width as f64, self.height as f64);
        let corners = [
            (0.0, 0.0),
            (w - 1.0, 0.0),
            (0.0, h - 1.0),
            (w - 1.0, h - 1.0),
        ]
        .map(|(u, v)| (u - origin.0, v - origin.1));
        let (y1, y2, far) = (p.y_m + 1.0, p.y_m + 2.0, p.y_m + 30.0);
        // A world segment a..b (its line is the clutter line), and a
        // point on its dark side if the scene fixes one.
        let mut push = |kind: &'static str, a: [f64; 3], b: [f64; 3], dark: Option<[f64; 3]>| {
            let mut line = Self::world_line(&p, view, a, b, origin);
            let sides = corners.map(|(x, y)| line.distance(x, y) > 0.0);
            let length_px = self.image_length(&p, view, a, b);
            if sides.iter().all(|&s| s == sides[0]) || length_px <= 0.0 {
                return;
            }
            let known = dark.and_then(|d| Self::project(&p, view, d, origin));
            if let Some((x, y)) = known {
                line.brighter_along_normal = line.distance(x, y) < 0.0;
            }
            out.push(Clutter {
                kind,
                line,
                polarity_known: known.is_some(),
                length_px,
            });
        };
        let r = self.racking_x_m;
        for side in [-1.0, 1.0] {
            let x = side * r;
            push(
                "racking-base",
                [x, p.y_m, 0.0],
                [x, far, 0.0],
                Some([x + side * 0.01, y1, 0.05]),
            );
            for z in [0.10, 0.20, 1.05, 1.15] {
                push("beam", [x, p.y_m, z], [x, far, z], None);
            }
            let first = ((p.y_m + 1.0 - 0.6) / 2.7).ceil() as i64;
            for n in first.. {
                let y = 0.6 + 2.7 * n as f64;
                if y > p.y_m + 12.0 {
                    break;
                }
                for (edge, dark_dy) in [(y, 0.04), (y + 0.08, -0.04)] {
                    push(
                        "upright",
                        [x, edge, 0.0],
                        [x, edge, 2.4],
                        Some([x, edge + dark_dy, 0.6]),
                    );
                }
            }
        }
        let first = ((p.y_m + 0.15 - self.joint_first_m) / self.joint_spacing_m).ceil() as i64;
        for n in first.. {
            let y = self.joint_first_m + self.joint_spacing_m * n as f64;
            if y > p.y_m + 8.0 {
                break;
            }
            for dy in [-0.0045, 0.0045] {
                push(
                    "joint-across",
                    [-r, y + dy, 0.0],
                    [r, y + dy, 0.0],
                    Some([p.x_m, y, 0.0]),
                );
            }
        }
        let xl = self.long_joint_x_m;
        for dx in [-0.0045, 0.0045] {
            push(
                "joint-along",
                [xl + dx, p.y_m, 0.0],
                [xl + dx, far, 0.0],
                Some([xl, y2, 0.0]),
            );
        }
        let o = &self.occluder;
        let c = o.centre_x(k as f64);
        if (c - p.x_m).abs() < 2.0 {
            for x in [c - o.width_m / 2.0, c + o.width_m / 2.0] {
                let y = p.y_m + o.ahead_m;
                push("occluder", [x, y, 0.0], [x, y, o.height_m], None);
            }
        }
        out
    }

    /// Length, corrected-view pixels, of the image of the world segment
    /// `a`..`b` inside the view (the segment sampled at 400 points; the
    /// pieces between consecutive points that project inside the view are
    /// added up; nothing is hidden).
    pub fn image_length(&self, p: &Pose, view: &Intrinsics, a: [f64; 3], b: [f64; 3]) -> f64 {
        let (w, h) = (self.width as f64 - 1.0, self.height as f64 - 1.0);
        let mut prev: Option<(f64, f64)> = None;
        let mut len = 0.0;
        for i in 0..=400 {
            let t = i as f64 / 400.0;
            let q = [0, 1, 2].map(|c| a[c] + t * (b[c] - a[c]));
            let here = Self::project(p, view, q, (0.0, 0.0))
                .filter(|&(u, v)| (0.0..=w).contains(&u) && (0.0..=h).contains(&v));
            if let (Some(p0), Some(p1)) = (prev, here) {
                len += (p1.0 - p0.0).hypot(p1.1 - p0.1);
            }
            prev = here;
        }
        len
    }

    /// Visible share of an edge line (module docs).
    fn visible_share(
        &self,
        view: &Intrinsics,
        p: &Pose,
        k: usize,
        l: &TruthLine,
        origin: (f64, f64),
    ) -> f64 {
        let horizon = view.cy - view.fy * CAMERA_PITCH_DEG.to_radians().tan();
        let top = (horizon + 8.0).ceil().max(0.0) as usize;
        let (mut seen, mut total) = (0usize, 0usize);
        for v in top..self.height {
            let Some(x) = l.x_at(v as f64 - origin.1) else {
                continue;
            };
            let u = x + origin.0;
            if !(0.0..=self.width as f64 - 1.0).contains(&u) {
                continue;
            }
            total += 1;
            if matches!(
                self.cast(
                    p,
                    p.heading_rad.sin_cos(),
                    k,
                    &Self::view_ray(view, u, v as f64)
                ),
                Hit::Floor { .. }
            ) {
                seen += 1;
            }
        }
        if total == 0 {
            0.0
        } else {
            seen as f64 / total as f64
        }
    }

    /// The truth of every frame, lines about the image centre.
    pub fn truth_all(&self) -> Result<SequenceTruth, String> {
        let view = self.view()?;
        let origin = (
            (self.width as f64 - 1.0) / 2.0,
            (self.height as f64 - 1.0) / 2.0,
        );
        Ok(SequenceTruth {
            frames: (0..self.frames)
                .map(|k| self.truth(&view, k, origin))
                .collect(),
        })
    }
}

impl Sequence {
    /// Prepares a sequence (the corrected view; the ray table is built on
    /// the first [`render`](Self::render)).
    pub fn new(spec: &SequenceSpec) -> Result<Self, String> {
        let camera = demo_camera(spec.width, spec.height);
        // An empty spec is refused by `through` before its view is asked for.
        match spec.view() {
            Ok(view) => Self::through(spec, camera, view),
            Err(why) => Self::through(spec, camera, camera.intrinsics).and(Err(why)),
        }
    }

    /// As [`new`](Self::new), seen through `camera` with corrected view
    /// `view` (both in pixels of the spec's size) instead of the demo
    /// camera and its fit-to-view: the frames are rendered through
    /// `camera`, the truth is drawn in `view`.
    pub fn through(spec: &SequenceSpec, camera: Camera, view: Intrinsics) -> Result<Self, String> {
        if spec.width == 0 || spec.height == 0 || spec.frames == 0 {
            return Err(format!(
                "sequence {}: {} frames of {}x{} is empty",
                spec.name, spec.frames, spec.width, spec.height
            ));
        }
        Ok(Self {
            spec: *spec,
            camera,
            view,
            rays: OnceLock::new(),
        })
    }

    /// The spec.
    pub fn spec(&self) -> &SequenceSpec {
        &self.spec
    }

    /// The sensor camera (intrinsics and lens).
    pub fn camera(&self) -> &Camera {
        &self.camera
    }

    /// The corrected view's intrinsics (the truth's pinhole).
    pub fn view(&self) -> &Intrinsics {
        &self.view
    }

    /// The truth of frame `k`, lines about `origin`.
    pub fn truth(&self, k: usize, origin: (f64, f64)) -> FrameTruth {
        self.spec.truth(&self.view, k, origin)
    }

    fn rays(&self) -> &[Ray] {
        self.rays.get_or_init(|| {
            let (sp, cp) = CAMERA_PITCH_DEG.to_radians().sin_cos();
            let (w, h) = (self.spec.width, self.spec.height);
            let mut rays = Vec::with_capacity(w * h * SS * SS);
            for v in 0..h {
                for u in 0..w {
                    for sy in 0..SS {
                        for sx in 0..SS {
                            let (xd, yd) = self.camera.intrinsics.normalise(
                                u as f64 + (sx as f64 - 1.0) / 3.0,
                                v as f64 + (sy as f64 - 1.0) / 3.0,
                            );
                            rays.push(self.camera.lens.undistort(xd, yd).ok().map(|(x, y)| {
                                let d = floor_ray(x, y, sp, cp);
                                ([d.0, d.1, d.2], vignette(x, y))
                            }));
                        }
                    }
                }
            }
            rays
        })
    }

    /// Renders sensor frame `k` (grey, row-major, stride = width).
    pub fn render(&self, k: usize) -> Vec<u8> {
        let s = &self.spec;
        let p = s.pose(k);
        let sc = p.heading_rad.sin_cos();
        let texture = FloorTexture::new(s.seed);
        let mut rng = ChaCha8Rng::seed_from_u64(mix(s.seed ^ mix(k as u64 + 1)));
        let read = Normal::new(0.0, s.noise_dn).expect("noise sigma is finite and >= 0");
        let rays = self.rays();
        let groove = |d: f64| 1.0 - crate::scene::smoothstep(0.003, 0.006, d);
        let mut out = vec![0u8; s.width * s.height];
        for (i, px) in out.iter_mut().enumerate() {
            let mut acc = 0.0;
            // (concrete, light, glare) at the pixel's first floor ray, and
            // the tape's wear at its first ray on the tape.
            let mut floor: Option<(f64, f64, f64)> = None;
            let mut worn: Option<f64> = None;
            for ray in &rays[i * SS * SS..(i + 1) * SS * SS] {
                let Some((d, vig)) = ray else {
                    acc += 40.0;
                    continue;
                };
                acc += match self.spec.cast(&p, sc, k, d) {
                    Hit::Floor { x, y } => {
                        let (base, light, glare) = *floor.get_or_insert_with(|| {
                            (
                                texture.concrete(x, y),
                                s.floor_light(x, y),
                                s.glare(&p, x, y),
                            )
                        });
                        let rel = (y - s.joint_first_m) / s.joint_spacing_m;
                        let dj = (rel - rel.round()).abs() * s.joint_spacing_m;
                        let joint = groove(dj).max(groove((x - s.long_joint_x_m).abs()));
                        let base = base * (1.0 - 0.55 * joint);
                        let cover = tape_cover(x.abs(), s.tape_width_m);
                        let tape = if cover > 0.0 {
                            let worn =
                                *worn.get_or_insert_with(|| texture.worn(x, y, s.wear_at(y)));
                            cover * (1.0 - 0.8 * worn)
                        } else {
                            0.0
                        };
                        (base * (1.0 - tape) + TAPE_ALBEDO * tape) * light * vig + glare
                    }
                    Hit::Rack { right, y, z } => s.rack(right, y, z) * s.light * vig,
                    Hit::Panel { x, z } => {
                        let stripe = if ((x + z) * 12.0).rem_euclid(1.0) < 0.5 {
                            8.0
                        } else {
                            0.0
                        };
                        (s.occluder.albedo + stripe) * s.light * vig
                    }
                    Hit::Nothing => BACKGROUND * s.light * vig,
                };
            }
            *px = sensor_reading(acc / (SS * SS) as f64, &mut rng, &read);
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A small copy of the demo sequence (quarter size) for fast tests.
    fn small() -> SequenceSpec {
        SequenceSpec {
            width: 160,
            height: 120,
            reference_px: (79.5, 119.0),
            ..DEMO_SEQUENCE
        }
    }

    /// Camera-frame point of a world floor point, by the textbook
    /// rotation of a camera pitched down by `phi` (written out here apart
    /// from the truth code): `x = right`, `y = h cos(phi) - fwd sin(phi)`,
    /// `z = fwd cos(phi) + h sin(phi)`.
    fn project(view: &Intrinsics, p: &Pose, xw: f64, yw: f64) -> (f64, f64) {
        let phi = CAMERA_PITCH_DEG.to_radians();
        let h = CAMERA_HEIGHT_M;
        let (dx, dy) = (xw - p.x_m, yw - p.y_m);
        let right = dx * p.heading_rad.cos() - dy * p.heading_rad.sin();
        let fwd = dx * p.heading_rad.sin() + dy * p.heading_rad.cos();
        let y = h * phi.cos() - fwd * phi.sin();
        let z = fwd * phi.cos() + h * phi.sin();
        (view.cx + view.fx * right / z, view.cy + view.fy * y / z)
    }

    #[test]
    fn truth_lines_pass_through_the_projected_tape_edges() {
        let s = DEMO_SEQUENCE;
        let view = s.view().unwrap();
        for k in [0, 17, 36, 59, 95] {
            // Any origin: the lines move with it.
            for origin in [(view.cx, view.cy), (0.0, 0.0), (-12.5, 300.25)] {
                let t = s.truth(&view, k, origin);
                for (e, l) in t.edges.iter().enumerate() {
                    assert!((0.0..PI).contains(&l.theta));
                    // The edge is X = -w/2 for the left line, +w/2 for the right
                    // (the heading is far too small to swap them).
                    let xw = if e == 0 { -0.025 } else { 0.025 };
                    for ahead in [0.1, 0.4, 1.5, 6.0] {
                        let (u, v) = project(&view, &t.pose, xw, t.pose.y_m + ahead);
                        let d = l.distance(u - origin.0, v - origin.1);
                        assert!(d.abs() < 1e-9, "frame {k} edge {e} ahead {ahead}: {d} px");
                    }
                }
                // Edge order and the reference margins agree with the
                // geometry: the tape lies between the edges.
                let (rx, ry) = (s.reference_px.0 - origin.0, s.reference_px.1 - origin.1);
                let xl = t.edges[0].x_at(ry).unwrap();
                let xr = t.edges[1].x_at(ry).unwrap();
                assert!(xl < xr);
                assert!(
                    (t.margin_px[0] + t.margin_px[1] - (xr - xl) * t.edges[0].theta.cos().abs())
                        .abs()
                        < 0.5
                );
                let inside = rx > xl && rx < xr;
                assert_eq!(inside, t.margin_px.iter().all(|&m| m > 0.0), "frame {k}");
            }
        }
    }

    #[test]
    fn clutter_lines_are_the_scene_objects_seen_from_the_cart() {
        let s = DEMO_SEQUENCE;
        let view = s.view().unwrap();
        let origin = (view.cx, view.cy);
        for k in [0, 36, 80] {
            let p = s.pose(k);
            let c = s.clutter(&view, k, origin);
            let kinds: std::collections::BTreeSet<&str> = c.iter().map(|c| c.kind).collect();
            for want in [
                "racking-base",
                "beam",
                "upright",
                "joint-across",
                "joint-along",
            ] {
                assert!(kinds.contains(want), "frame {k}: no {want} in {kinds:?}");
            }
            assert_eq!(kinds.contains("occluder"), k == 36, "frame {k}");
            // The joint along the aisle: both sides pass through their
            // projected floor points, the groove's centre darker.
            let along: Vec<_> = c.iter().filter(|c| c.kind == "joint-along").collect();
            assert_eq!(along.len(), 2);
            for (l, dx) in along.iter().zip([-0.0045, 0.0045]) {
                let x = s.long_joint_x_m + dx;
                for ahead in [0.5, 2.0] {
                    let (u, v) = project(&view, &p, x, p.y_m + ahead);
                    assert!(l.line.distance(u - origin.0, v - origin.1).abs() < 1e-9);
                }
                let (u, v) = project(&view, &p, s.long_joint_x_m, p.y_m + 1.0);
                let towards_groove = l.line.distance(u - origin.0, v - origin.1) > 0.0;
                assert!(l.polarity_known && towards_groove != l.line.brighter_along_normal);
                assert!(l.length_px > 50.0);
            }
        }
    }

    #[test]
    fn quantised_lines_use_the_shared_units() {
        let l = TruthLine {
            rho: -2.53,
            theta: PI * (1.0 - 1e-7),
            brighter_along_normal: true,
        };
        // 180 degrees wraps to 0 with rho negated.
        assert_eq!(l.quantised(), (40, 0));
        let l = TruthLine {
            rho: 10.0,
            theta: PI / 4.0,
            brighter_along_normal: true,
        };
        assert_eq!(l.quantised(), (160, 16384));
    }

    /// The demo sequence's truth: the figures the README and the report
    /// quote (printed with `--nocapture`).
    #[test]
    fn demo_sequence_crosses_once_after_a_short_occlusion() {
        let t = DEMO_SEQUENCE.truth_all().unwrap();
        let c = t.crossing().unwrap();
        println!(
            "crossing: {:?} edge at frame {} (t = {:.3}); occluded frames {:?}",
            c.edge,
            c.frame,
            c.time,
            t.occluded_frames()
        );
        assert_eq!((c.edge, c.frame), (Side::Right, 59));
        assert_eq!(t.occluded_frames(), vec![34, 35, 36, 37, 38]);
        // Before the crossing the point is on the tape, after it off.
        for f in &t.frames {
            assert_eq!(f.margin_px[1] > 0.0, f.frame < c.frame, "frame {}", f.frame);
            assert!(f.margin_px[0] > 0.0);
        }
    }

    /// Nearest-pixel value of the sensor image at corrected-view point
    /// `(u, v)`.
    fn sample(seq: &Sequence, img: &[u8], u: f64, v: f64) -> f64 {
        let (x, y) = seq.camera().source_of(seq.view(), u, v);
        let (w, h) = (seq.spec().width, seq.spec().height);
        let xi = (x.round() as usize).min(w - 1);
        let yi = (y.round() as usize).min(h - 1);
        img[yi * w + xi] as f64
    }

    /// Mean grey level just inside the tape minus just outside it, along
    /// both truth edges, over the floor rows of the corrected view (only
    /// where the edge is hidden by the occluder when `hidden`).
    fn contrast(
        seq: &Sequence,
        img: &[u8],
        t: &FrameTruth,
        origin: (f64, f64),
        hidden: bool,
    ) -> f64 {
        let (mut diff, mut n) = (0.0, 0usize);
        let horizon = seq.view().cy - seq.view().fy * CAMERA_PITCH_DEG.to_radians().tan();
        for v in (horizon as usize + 12)..seq.spec().height {
            for (e, l) in t.edges.iter().enumerate() {
                let u = l.x_at(v as f64 - origin.1).unwrap() + origin.0;
                let ray = SequenceSpec::view_ray(seq.view(), u, v as f64);
                let sc = t.pose.heading_rad.sin_cos();
                let on_panel = matches!(
                    seq.spec().cast(&t.pose, sc, t.frame, &ray),
                    Hit::Panel { .. }
                );
                if on_panel != hidden {
                    continue;
                }
                let inward = if e == 0 { 1.0 } else { -1.0 };
                let a = sample(seq, img, u + 1.5 * inward, v as f64);
                let b = sample(seq, img, u - 2.5 * inward, v as f64);
                diff += a - b;
                n += 1;
            }
        }
        diff / n as f64
    }

    #[test]
    fn rendered_tape_lies_between_the_truth_edges() {
        let seq = Sequence::new(&small()).unwrap();
        let origin = (seq.view().cx, seq.view().cy);
        for k in [0, 20, 59, 90] {
            let img = seq.render(k);
            let t = seq.truth(k, origin);
            let c = contrast(&seq, &img, &t, origin, false);
            assert!(c > 25.0, "frame {k}: tape only {c:.1} DN brighter");
        }
        // Hidden by the passing object: no tape to be seen.
        let k = 36;
        let t = seq.truth(k, origin);
        assert!(t.occluded());
        let c = contrast(&seq, &seq.render(k), &t, origin, true);
        assert!(c.abs() < 3.0, "frame {k}: {c:.1} DN");
    }

    #[test]
    fn frames_render_alike_in_any_order() {
        let seq = Sequence::new(&small()).unwrap();
        let a = seq.render(7);
        let _ = seq.render(3);
        assert_eq!(a, seq.render(7));
        assert_ne!(a, seq.render(8));
        assert!(Sequence::new(&SequenceSpec {
            frames: 0,
            ..small()
        })
        .is_err());
    }
}
