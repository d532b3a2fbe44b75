//! The level diagram of `cleave check --diagram`: its SVG names what it shows, and rendered to
//! PNG by librsvg (`rsvg-convert`) it is a picture, not a blank page.

use std::path::PathBuf;
use std::process::Command;

use cleave::check::{self, SweepOptions};
use cleave::engine::{self, DeriveOptions};
use cleave::exact::Rational;

fn example(name: &str) -> String {
    let path = format!("{}/examples/{name}.clv", env!("CARGO_MANIFEST_DIR"));
    std::fs::read_to_string(path).expect("the example exists")
}

/// The diagram of `text` to `order` at the parameter values `at`.
fn diagram(text: &str, order: u32, at: &[(&str, Rational)]) -> String {
    let (model, _) = cleave::load(text).expect("a valid model");
    let derivation = engine::derive(&model, &DeriveOptions::new(order)).expect("derivable");
    let options = SweepOptions {
        at: at.iter().map(|(n, v)| (n.to_string(), v.clone())).collect(),
        order: Some(order),
        lambda_max: None,
        against: None,
        points: None,
    };
    let sweep = check::sweep(&model, &derivation, &options);
    assert!(sweep.skipped.is_none(), "{:?}", sweep.skipped);
    cleave::emit::diagram(&model, &derivation, &sweep, "model.clv")
}

fn half() -> Rational {
    Rational::ratio(1, 2).expect("nonzero")
}

#[test]
fn diagram_names_its_axes_branches_and_radius() {
    let svg = diagram(&example("qubit_resonator"), 4, &[("delta", half())]);
    assert!(svg.starts_with("<svg"), "{svg}");
    for expected in [
        ">lambda</text>",
        ">energy</text>",
        ">0.0</text>",
        ">0.4</text>",
        "exact diagonalization",
        "series to order 1 .. 4",
        "1.1 |-1/2, 0&gt;",
        "2.1 |-1/2, 1&gt;",
        "3.1 |+1/2, 0&gt;",
        "radius ~ 0.5",
        "at w = 1, delta = 0.5, g = 1",
    ] {
        assert!(svg.contains(expected), "{expected:?} missing from\n{svg}");
    }
    // Three branches, four orders each, dashed.
    assert_eq!(svg.matches("stroke-dasharray=\"6 4\" stroke-opacity").count(), 12);
}

fn find_tool(name: &str) -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path).map(|dir| dir.join(name)).find(|p| p.is_file())
}

#[test]
fn diagram_renders_to_a_picture_that_is_not_blank() {
    let Some(rsvg) = find_tool("rsvg-convert") else {
        if std::env::var_os("CI").is_some() {
            panic!("rsvg-convert is not installed, and CI requires the diagram to render");
        }
        eprintln!(
            "\n!!!!!!!! rsvg-convert NOT FOUND: the level diagram was NOT rendered. Install \
             librsvg2-bin to run this check. !!!!!!!!\n"
        );
        return;
    };
    for (name, svg) in [
        ("qubit_resonator", diagram(&example("qubit_resonator"), 4, &[("delta", half())])),
        ("spin_orbit_field", diagram(&example("spin_orbit_field"), 3, &[("h", half())])),
    ] {
        let dir = tempfile::tempdir().expect("temp dir");
        let svg_path = dir.path().join("diagram.svg");
        let png_path = dir.path().join("diagram.png");
        std::fs::write(&svg_path, &svg).expect("write");
        let output = Command::new(&rsvg).arg("-o").arg(&png_path).arg(&svg_path).output();
        let output = output.expect("rsvg-convert runs");
        assert!(output.status.success(), "{name}: {}", String::from_utf8_lossy(&output.stderr));
        let decoder = png::Decoder::new(std::fs::File::open(&png_path).expect("the PNG"));
        let mut reader = decoder.read_info().expect("a PNG header");
        let mut pixels = vec![0; reader.output_buffer_size()];
        let info = reader.next_frame(&mut pixels).expect("a frame");
        assert_eq!((info.width, info.height), (760, 500), "{name}");
        let channels = info.line_size / info.width as usize;
        let pixels = &pixels[..info.buffer_size()];
        let inked = pixels.chunks(channels).filter(|p| p[..3].iter().any(|c| *c < 200)).count();
        let colored = pixels.chunks(channels).filter(|p| p[0].abs_diff(p[2]) > 60).count();
        let total = (info.width * info.height) as usize;
        // Lines, ticks and labels darken a few percent of the page; branch colors show.
        assert!(inked * 100 > total, "{name}: only {inked} of {total} pixels are drawn");
        assert!(colored > 500, "{name}: only {colored} colored pixels");
    }
}

/// The diagram README shows is what `cleave check examples/qubit_resonator.clv --at delta=1/2
/// --diagram docs/qubit_resonator_diagram.svg` writes today.
#[test]
fn readme_diagram_is_current() {
    let (model, _) = cleave::load(&example("qubit_resonator")).expect("a valid model");
    // As the command line does: the order of the model, derived two orders further.
    let order = model.order().expect("the example sets its order");
    let derivation = engine::derive(&model, &DeriveOptions::new(order + 2)).expect("derivable");
    let options = SweepOptions {
        at: vec![("delta".to_string(), half())],
        order: Some(order),
        lambda_max: None,
        against: None,
        points: None,
    };
    let sweep = check::sweep(&model, &derivation, &options);
    let svg = cleave::emit::diagram(&model, &derivation, &sweep, "examples/qubit_resonator.clv");
    assert_eq!(svg, include_str!("../../docs/qubit_resonator_diagram.svg"));
}

#[test]
fn diagram_against_a_parameter_from_the_command_line() {
    let dir = tempfile::tempdir().expect("temp dir");
    let svg_path = dir.path().join("g.svg");
    let output = Command::new(env!("CARGO_BIN_EXE_cleave"))
        .args(["check", "examples/qubit_resonator.clv", "--at", "delta=1/2", "--diagram"])
        .arg(&svg_path)
        .args(["--against", "g=0..1/2"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run cleave");
    assert!(output.status.success(), "{}", String::from_utf8_lossy(&output.stderr));
    let svg = std::fs::read_to_string(&svg_path).expect("the diagram");
    assert!(svg.contains("against g at lambda = 1, w = 1, delta = 0.5"), "{svg}");
    assert!(svg.contains(">g</text>") && svg.contains(">0.5</text>"), "{svg}");
    assert!(!svg.contains("radius ~"), "a radius in lambda means nothing against g");
    for (against, expected) in [
        ("x=0..1", "--against x=0..1: the model has no free parameter `x`"),
        ("g=1..0", "--against g=1..0: the range must go up"),
        ("g=0", "--against g=0: expected a range FROM..TO"),
    ] {
        let output = Command::new(env!("CARGO_BIN_EXE_cleave"))
            .args(["check", "examples/qubit_resonator.clv", "--diagram"])
            .arg(&svg_path)
            .args(["--against", against])
            .current_dir(env!("CARGO_MANIFEST_DIR"))
            .output()
            .expect("run cleave");
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(2), "{stderr}");
        assert!(stderr.contains(expected), "{expected:?} not in {stderr}");
    }
}
