//! Natural test photographs: openly licensed photographs, shipped as grey
//! 320 x 240 PNG crops in `host-verify/data/natural/` and built into the
//! tool (nothing is read or downloaded at run time). The report runs every
//! accuracy contract on them beside the rendered demo scenes and shows each
//! [`SceneClass`] separately.
//!
//! Source: the sample data files shipped in the Python package
//! `scikit-image` 0.25.2 (PyPI), folder `skimage/data/`; each image's
//! licence and origin are in [`NATURAL`] and in
//! `host-verify/data/natural/SOURCES.md`, as the package's own docs state
//! them. Only the data files are used, none of the package's code. The
//! crops were made by `cargo run -p fixsight-verify --example
//! natural_images` (grey by the `image` crate's Rec. 709 luma rule, crop
//! without resampling).
//!
//! Classes, chosen by what the photograph shows and its RMS contrast (the
//! standard deviation of the grey levels, Peli 1990, "Contrast in complex
//! images", JOSA A 7(10)), not fitted to any result:
//! [`SceneClass::Sharp`] for high-contrast scenes with hard edges (RMS
//! contrast 58 to 81), [`SceneClass::Texture`] for low-contrast textured
//! surfaces (RMS contrast 27 to 40, [`rms_contrast`]).
//!
//! ```
//! let imgs = fixsight_verify::natural::natural_scenes();
//! assert_eq!(imgs.len(), fixsight_verify::natural::NATURAL.len());
//! assert!(imgs.iter().all(|s| s.width == 320 && s.height == 240));
//! ```

use crate::scene::{demo_camera, demo_scenes, Scene, SceneClass};

/// Width of every natural crop.
pub const NATURAL_WIDTH: usize = 320;
/// Height of every natural crop.
pub const NATURAL_HEIGHT: usize = 240;

/// The package the photographs come from.
pub const PACKAGE: &str = "scikit-image 0.25.2 (PyPI), skimage/data/";

/// One natural photograph: where it comes from and how it was cut.
#[derive(Debug, Clone, Copy)]
pub struct NaturalImage {
    /// Name in reports (also the PNG's stem in `data/natural/`).
    pub name: &'static str,
    /// File in the package's data folder.
    pub file: &'static str,
    /// Class.
    pub class: SceneClass,
    /// What it shows.
    pub description: &'static str,
    /// Licence, as the package's docs state it.
    pub licence: &'static str,
    /// Origin, as the package's docs state it.
    pub source: &'static str,
    /// Top-left corner of the 320 x 240 crop in the original.
    pub crop_at: (u32, u32),
    /// The crop as PNG bytes.
    pub png: &'static [u8],
}

/// The natural photographs, by class.
pub const NATURAL: [NaturalImage; 8] = [
    NaturalImage {
        name: "camera",
        file: "camera.png",
        class: SceneClass::Sharp,
        description: "man with a camera on a tripod against the sky",
        licence: "CC0 (photographer Lav Varshney)",
        source: "scikit-image data `camera`",
        crop_at: (100, 60),
        png: include_bytes!("../data/natural/camera.png"),
    },
    NaturalImage {
        name: "coins",
        file: "coins.png",
        class: SceneClass::Sharp,
        description: "Greek coins on a dark background",
        licence: "no known copyright restrictions (Brooklyn Museum collection)",
        source: "scikit-image data `coins`",
        crop_at: (32, 32),
        png: include_bytes!("../data/natural/coins.png"),
    },
    NaturalImage {
        name: "astronaut",
        file: "astronaut.png",
        class: SceneClass::Sharp,
        description: "astronaut portrait with flag, helmet and suit detail",
        licence: "public domain (NASA photograph)",
        source: "scikit-image data `astronaut`",
        crop_at: (96, 20),
        png: include_bytes!("../data/natural/astronaut.png"),
    },
    NaturalImage {
        name: "chelsea",
        file: "chelsea.png",
        class: SceneClass::Texture,
        description: "cat's head: fur and whiskers, low contrast",
        licence: "CC0 (photographer Stefan van der Walt)",
        source: "scikit-image data `chelsea`",
        crop_at: (65, 30),
        png: include_bytes!("../data/natural/chelsea.png"),
    },
    NaturalImage {
        name: "coffee",
        file: "coffee.png",
        class: SceneClass::Sharp,
        description: "cup of coffee on a saucer, specular highlights",
        licence: "CC0 (photographer Rachel Michetti)",
        source: "scikit-image data `coffee`",
        crop_at: (140, 80),
        png: include_bytes!("../data/natural/coffee.png"),
    },
    NaturalImage {
        name: "brick",
        file: "brick.png",
        class: SceneClass::Texture,
        description: "brick wall, low contrast",
        licence: "CC0 (CC0Textures, Bricks25)",
        source: "scikit-image data `brick`",
        crop_at: (96, 136),
        png: include_bytes!("../data/natural/brick.png"),
    },
    NaturalImage {
        name: "grass",
        file: "grass.png",
        class: SceneClass::Texture,
        description: "grass, fine low-contrast texture",
        licence: "CC0 (DeviantArt user linolafett, Grass-01)",
        source: "scikit-image data `grass`",
        crop_at: (96, 136),
        png: include_bytes!("../data/natural/grass.png"),
    },
    NaturalImage {
        name: "gravel",
        file: "gravel.png",
        class: SceneClass::Texture,
        description: "gravel, low-contrast texture",
        licence: "CC0 (CC0Textures, Gravel04)",
        source: "scikit-image data `gravel`",
        crop_at: (96, 136),
        png: include_bytes!("../data/natural/gravel.png"),
    },
];

impl NaturalImage {
    /// Decodes the crop into a [`Scene`] with the demo camera (seed 0).
    ///
    /// Panics if the built-in PNG is not a 320 x 240 image (a broken build,
    /// caught by the tests), never on user input.
    pub fn scene(&self) -> Scene {
        let img = image::load_from_memory_with_format(self.png, image::ImageFormat::Png)
            .expect("built-in natural PNG decodes")
            .to_luma8();
        assert_eq!(
            (img.width() as usize, img.height() as usize),
            (NATURAL_WIDTH, NATURAL_HEIGHT),
            "built-in natural image {} has the wrong size",
            self.name
        );
        Scene {
            name: self.name,
            description: self.description,
            seed: 0,
            width: NATURAL_WIDTH,
            height: NATURAL_HEIGHT,
            gray: img.into_raw(),
            camera: demo_camera(NATURAL_WIDTH, NATURAL_HEIGHT),
            class: self.class,
        }
    }
}

/// RMS contrast of an image: the standard deviation of its grey levels
/// (Peli 1990, "Contrast in complex images", JOSA A 7(10)).
pub fn rms_contrast(s: &Scene) -> f64 {
    let n = s.gray.len().max(1) as f64;
    let mean = s.gray.iter().map(|&v| v as f64).sum::<f64>() / n;
    (s.gray
        .iter()
        .map(|&v| (v as f64 - mean).powi(2))
        .sum::<f64>()
        / n)
        .sqrt()
}

/// Every natural photograph as a [`Scene`], in [`NATURAL`] order.
pub fn natural_scenes() -> Vec<Scene> {
    NATURAL.iter().map(NaturalImage::scene).collect()
}

/// The image this scene name refers to, when it is a natural photograph.
pub fn natural_image(name: &str) -> Option<&'static NaturalImage> {
    NATURAL.iter().find(|n| n.name == name)
}

/// The demo scenes followed by the natural photographs: what the report's
/// accuracy contracts run on.
pub fn all_scenes() -> Vec<Scene> {
    let mut s = demo_scenes();
    s.extend(natural_scenes());
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_class_has_images_and_names_are_unique() {
        for c in [SceneClass::Sharp, SceneClass::Texture] {
            assert!(
                NATURAL.iter().filter(|n| n.class == c).count() >= 2,
                "{c:?}"
            );
        }
        let mut names: Vec<_> = all_scenes().iter().map(|s| s.name).collect();
        let n = names.len();
        names.sort_unstable();
        names.dedup();
        assert_eq!(names.len(), n);
    }

    #[test]
    fn shipped_data_stays_small_and_named_in_sources() {
        let total: usize = NATURAL.iter().map(|n| n.png.len()).sum();
        assert!(total <= 1 << 20, "{total} bytes");
        let sources = include_str!("../data/natural/SOURCES.md");
        assert!(sources.contains("scikit-image") && sources.contains("0.25.2"));
        for n in NATURAL {
            assert!(sources.contains(n.file), "{} not in SOURCES.md", n.file);
        }
    }

    #[test]
    fn texture_images_have_less_contrast_than_sharp_ones() {
        for n in NATURAL {
            let c = rms_contrast(&n.scene());
            match n.class {
                SceneClass::Sharp => assert!(c > 50.0, "{}: {c}", n.name),
                _ => assert!(c < 45.0, "{}: {c}", n.name),
            }
        }
    }
}
