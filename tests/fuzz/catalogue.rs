//! A catalogue of hostile inputs, each run through the command line as a user would: the
//! exit status, and the words the message must hold (the file, the field as a JSON path,
//! the value, what was expected). Several come from the hardening issue's fuzz findings and
//! from the fuzz harness beside this file; none may panic.

use std::path::Path;

use serde_json::Value;

/// What a case writes into its folder before the command runs.
enum Content {
    /// Text as given.
    Text(&'static str),
    /// A corpus file with the JSON value at a pointer replaced.
    Tampered(&'static str, &'static str, &'static str),
    /// Bytes as given (not UTF-8).
    Bytes(&'static [u8]),
    /// A corpus file as it is.
    Copy(&'static str),
    /// A sparse file of this many bytes.
    Sparse(u64),
    /// A folder.
    Folder,
}

/// One hostile input and the answer it must get.
struct Case {
    /// What the case is about.
    name: &'static str,
    /// Files written into the case's folder (the command runs there).
    files: &'static [(&'static str, Content)],
    /// Arguments of `sojourn`.
    args: &'static [&'static str],
    /// The exit status (1: refused by sojourn; 2: refused by the argument parser; 0 for the
    /// few fuzz finds that are valid input and must simply run).
    status: i32,
    /// Words the message on stderr must hold.
    needles: &'static [&'static str],
}

use Content::{Bytes, Copy, Folder, Sparse, Tampered, Text};

const SPHERE: &str = "models/test-sphere-tau20.json";
const SUN_LIKE: &str = "models/veyra-n3-sun-like.json";
const RUN_SHARD_1: &str = "tests/fuzz/corpus/run-shard-1-of-2.json";
const RUN_SHARD_2: &str = "tests/fuzz/corpus/run-shard-2-of-2.json";
const SWEEP_SHARD_1: &str = "tests/fuzz/corpus/sweep-shard-1-of-2.json";
const CHECKPOINT: &str = "tests/fuzz/corpus/sphere.ckpt";

/// A run of the sphere with the corpus checkpoint's settings.
const RESUME: &[&str] = &[
    "run",
    "m.json",
    "--photons",
    "30",
    "--checkpoint",
    "run.ckpt",
    "--checkpoint-every",
    "10",
    "-q",
];

/// Merging the tampered first run shard with the second.
const MERGE: &[&str] = &["merge", "a.json", "b.json"];

const CASES: &[Case] = &[
    // Model files: syntax and encoding.
    Case {
        name: "empty model file",
        files: &[("m.json", Text(""))],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "not valid JSON"],
    },
    Case {
        name: "a number beyond f64",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1e999,"extinction_coefficient":1}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "line 1", "number out of range"],
    },
    Case {
        name: "NaN is not JSON",
        files: &[(
            "m.json",
            Text(r#"{"geometry":"slab","layers":[{"thickness":NaN,"extinction_coefficient":1}]}"#),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "not valid JSON"],
    },
    Case {
        name: "bytes that are not UTF-8",
        files: &[("m.json", Bytes(b"{\"geometry\":\"sl\xffab\"}"))],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json: byte 15: not UTF-8 text"],
    },
    Case {
        name: "a folder for a model",
        files: &[("m.json", Folder)],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json: is a directory, not a model file"],
    },
    Case {
        name: "a device for a model",
        files: &[],
        args: &["run", "/dev/zero"],
        status: 1,
        needles: &["/dev/zero: is a character device, not a model file"],
    },
    Case {
        name: "a model file over the size limit",
        files: &[("m.json", Sparse(65 << 20))],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json: 65 MiB is more than the 64 MiB limit for a model file"],
    },
    Case {
        name: "a list for a model",
        files: &[("m.json", Text("[1, 2]"))],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json: .: a list: expected a model, an object"],
    },
    // Model files: fields.
    Case {
        name: "unknown geometry",
        files: &[(
            "m.json",
            Text(r#"{"geometry":"cube","layers":[{"thickness":1,"extinction_coefficient":1}]}"#),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "geometry", "cube"],
    },
    Case {
        name: "no layers",
        files: &[("m.json", Text(r#"{"geometry":"slab","layers":[]}"#))],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers"],
    },
    Case {
        name: "zero thickness",
        files: &[(
            "m.json",
            Text(r#"{"geometry":"slab","layers":[{"thickness":0,"extinction_coefficient":1}]}"#),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[0].thickness", "0"],
    },
    Case {
        name: "thickness beyond the length limit",
        files: &[(
            "m.json",
            Text(r#"{"geometry":"slab","layers":[{"thickness":1e31,"extinction_coefficient":1}]}"#),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[0].thickness", "1e31", "1e30 cm"],
    },
    Case {
        name: "radius near the largest f64",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"sphere","layers":[{"outer_radius":1.8e307,"extinction_coefficient":1}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[0].outer_radius", "1.8e307", "1e30 cm"],
    },
    Case {
        name: "negative extinction",
        files: &[(
            "m.json",
            Text(r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":-1}]}"#),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[0].extinction_coefficient", "-1"],
    },
    Case {
        name: "extinction beyond the coefficient limit",
        files: &[(
            "m.json",
            Text(r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1e31}]}"#),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[0].extinction_coefficient", "1e31"],
    },
    Case {
        name: "albedo above 1",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1,"albedo":1.5}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[0].albedo", "1.5"],
    },
    Case {
        name: "anisotropy g = 1.5",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1,"phase":{"kind":"henyey_greenstein","g":1.5}}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[0].phase.g", "1.5"],
    },
    Case {
        name: "anisotropy g of the wrong type names g",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1,"phase":{"kind":"henyey_greenstein","g":"x"}}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[0].phase.g", "expected a number"],
    },
    Case {
        name: "a layer that is not an object: no Rust type names",
        files: &[("m.json", Text(r#"{"geometry":"slab","layers":[1]}"#))],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[0]", "expected"],
    },
    Case {
        name: "refractive index 0",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1,"refractive_index":0}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[0].refractive_index", "0"],
    },
    Case {
        name: "decreasing outer radius",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"sphere","layers":[{"outer_radius":2,"extinction_coefficient":1},{"outer_radius":1,"extinction_coefficient":1}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[1].outer_radius"],
    },
    Case {
        name: "a slab field in a sphere",
        files: &[(
            "m.json",
            Text(r#"{"geometry":"sphere","layers":[{"thickness":1,"extinction_coefficient":1}]}"#),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "layers[0].thickness", "outer_radius"],
    },
    Case {
        name: "unknown key",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1,"colour":"red"}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "colour"],
    },
    Case {
        name: "unknown length unit",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","length_unit":"furlong","layers":[{"thickness":1,"extinction_coefficient":1}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "length_unit", "furlong"],
    },
    Case {
        name: "a sphere's source with a slab field",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"sphere","layers":[{"outer_radius":1,"extinction_coefficient":1}],"source":{"kind":"point","depth":1}}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "source", "radius"],
    },
    Case {
        name: "a detector ring whose inner radius is not below its outer radius",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","length_unit":"mm","layers":[{"thickness":1,"extinction_coefficient":1}],"detectors":[{"face":"top","inner_radius":2,"outer_radius":1}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &[
            "m.json",
            "detectors[0].outer_radius",
            "1 mm",
            "greater than inner_radius (2 mm)",
        ],
    },
    Case {
        name: "a detector off the slab's faces",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1}],"detectors":[{"face":"side","outer_radius":1}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "detectors[0].face", "side", "top", "bottom"],
    },
    Case {
        name: "a detector on a sphere",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"sphere","layers":[{"outer_radius":1,"extinction_coefficient":1}],"detectors":[{"face":"top","outer_radius":1}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "detectors", "slab"],
    },
    Case {
        name: "a numerical aperture at the ambient index",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1}],"ambient_index":1.33,"detectors":[{"face":"bottom","outer_radius":1,"numerical_aperture":1.33}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &[
            "m.json",
            "detectors[0].numerical_aperture",
            "1.33",
            "(0, 1.33)",
        ],
    },
    Case {
        name: "both a half-angle and a numerical aperture",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1}],"detectors":[{"face":"top","outer_radius":1,"numerical_aperture":0.2,"acceptance_half_angle_deg":10}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "detectors[0].numerical_aperture", "not both"],
    },
    Case {
        name: "a beam radius of zero",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","length_unit":"mm","layers":[{"thickness":1,"extinction_coefficient":1}],"source":{"kind":"beam","profile":"gaussian","radius":0}}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "source.radius", "0 mm", "beam radius > 0"],
    },
    Case {
        name: "a negative flat-beam radius",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1}],"source":{"kind":"beam","profile":"flat","radius":-1}}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "source.radius", "-1", "beam radius > 0"],
    },
    Case {
        name: "a gaussian beam without a radius",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1}],"source":{"kind":"beam","profile":"gaussian"}}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "source.radius", "missing"],
    },
    Case {
        name: "an unknown beam profile",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1}],"source":{"kind":"beam","profile":"donut","radius":1}}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &["m.json", "source.profile", "donut", "gaussian", "flat"],
    },
    Case {
        name: "a radial range upside down",
        files: &[],
        args: &["run", "--resolve", "--radial-range", "5:1"],
        status: 2,
        needles: &["--radial-range", "5:1", "MIN < MAX"],
    },
    Case {
        name: "too many layers",
        files: &[],
        args: &["run", "many-layers.json"],
        status: 1,
        needles: &["many-layers.json", "layers", "10001", "at most 10000"],
    },
    Case {
        name: "a mean free path below the resolution of positions (refused by the run plan)",
        files: &[(
            "m.json",
            Text(
                r#"{"geometry":"sphere","layers":[{"outer_radius":2e23,"extinction_coefficient":10}]}"#,
            ),
        )],
        args: &["run", "m.json"],
        status: 1,
        needles: &[
            "m.json: cannot run: layers[0]",
            "below 16 units in the last place of positions",
        ],
    },
    // Profiles.
    Case {
        name: "fuzz find: a 3.9 K row inside a star (tau 1.6e17 in one shell) runs, no panic",
        files: &[(
            "m.json",
            Tampered(SUN_LIKE, "/layers/0/profile/temperature/325", "3.9"),
        )],
        args: &[
            "run",
            "m.json",
            "--photons",
            "3",
            "--max-steps",
            "20000",
            "-q",
        ],
        status: 0,
        needles: &[],
    },
    Case {
        name: "profile temperature 0",
        files: &[(
            "p.json",
            Text(
                r#"{"geometry":"sphere","length_unit":"km","layers":[{"name":"core","profile":{"radius":[0,1,2],"density":[1,1,1],"temperature":[1e7,0,1e5],"hydrogen":0.7,"metals":0.02,"opacity_law":{"kind":"kramers_free_free"}}}]}"#,
            ),
        )],
        args: &["profile", "p.json"],
        status: 1,
        needles: &[
            "p.json",
            "layers[0].profile.temperature[1]",
            "= 0",
            "above 0 K",
        ],
    },
    Case {
        name: "profile hydrogen fraction 1.7",
        files: &[(
            "p.json",
            Text(
                r#"{"geometry":"sphere","length_unit":"km","layers":[{"name":"core","profile":{"radius":[0,1,2],"density":[1,1,1],"temperature":[1e7,1e6,1e5],"hydrogen":1.7,"metals":0.02,"opacity_law":{"kind":"electron_scattering"}}}]}"#,
            ),
        )],
        args: &["run", "p.json"],
        status: 1,
        needles: &["p.json", "layers[0].profile.hydrogen", "1.7", "[0, 1]"],
    },
    Case {
        name: "profile negative density",
        files: &[(
            "p.json",
            Text(
                r#"{"geometry":"sphere","length_unit":"km","layers":[{"name":"core","profile":{"radius":[0,1,2],"density":[1,-3,1],"temperature":[1e7,1e6,1e5],"hydrogen":0.7,"metals":0.02,"opacity_law":{"kind":"electron_scattering"}}}]}"#,
            ),
        )],
        args: &["profile", "p.json"],
        status: 1,
        needles: &["p.json", "layers[0].profile.density[1]", "-3"],
    },
    Case {
        name: "opacity-law field of the wrong type names the field",
        files: &[(
            "p.json",
            Text(
                r#"{"geometry":"sphere","length_unit":"km","layers":[{"name":"core","profile":{"radius":[0,1,2],"density":[1,1,1],"temperature":[1e7,1e6,1e5],"hydrogen":0.7,"metals":0.02,"opacity_law":{"kind":"kramers_free_free","gaunt":"x"}}}]}"#,
            ),
        )],
        args: &["profile", "p.json"],
        status: 1,
        needles: &[
            "p.json",
            "layers[0].profile.opacity_law.gaunt",
            "expected a number",
        ],
    },
    Case {
        name: "unknown opacity law",
        files: &[(
            "p.json",
            Text(
                r#"{"geometry":"sphere","length_unit":"km","layers":[{"name":"core","profile":{"radius":[0,1,2],"density":[1,1,1],"temperature":[1e7,1e6,1e5],"hydrogen":0.7,"metals":0.02,"opacity_law":{"kind":"thomson"}}}]}"#,
            ),
        )],
        args: &["profile", "p.json"],
        status: 1,
        needles: &["p.json", "layers[0].profile.opacity_law", "thomson"],
    },
    Case {
        name: "a device for an opacity table",
        files: &[],
        args: &[
            "star",
            "--polytrope",
            "3",
            "--mass",
            "1",
            "--radius",
            "1",
            "--out",
            "st.json",
            "--opacity-table",
            "/dev/zero",
        ],
        status: 1,
        needles: &["/dev/zero: is a character device, not an opacity table"],
    },
    // Sweep specs (refused before any point is built or listed).
    Case {
        name: "a sweep of 10^9 points, even with --dry-run",
        files: &[
            ("m.json", Copy(SPHERE)),
            (
                "s.json",
                Text(
                    r#"{"model":"m.json","parameters":[{"path":"layers[0].extinction_coefficient","linear":{"from":1,"to":2,"count":1000000000}}]}"#,
                ),
            ),
        ],
        args: &["sweep", "s.json", "--dry-run"],
        status: 1,
        needles: &[
            "s.json",
            "parameters[0].linear.count",
            "1000000000",
            "at most 10000",
        ],
    },
    Case {
        name: "a 10^5 x 10^5 grid",
        files: &[
            ("m.json", Copy(SPHERE)),
            (
                "s.json",
                Text(
                    r#"{"model":"m.json","combine":"grid","parameters":[{"path":"layers[0].extinction_coefficient","linear":{"from":1,"to":2,"count":10000}},{"path":"layers[0].albedo","linear":{"from":0.1,"to":0.9,"count":10000}}]}"#,
                ),
            ),
        ],
        args: &["sweep", "s.json", "--dry-run"],
        status: 1,
        needles: &["s.json", "parameters", "100000000 points", "at most 10000"],
    },
    Case {
        name: "a sweep of 0 photons",
        files: &[
            ("m.json", Copy(SPHERE)),
            (
                "s.json",
                Text(
                    r#"{"model":"m.json","photons":0,"parameters":[{"path":"layers[0].albedo","values":[0.5]}]}"#,
                ),
            ),
        ],
        args: &["sweep", "s.json", "--dry-run"],
        status: 1,
        needles: &["s.json", "photons = 0", "a whole number >= 1"],
    },
    Case {
        name: "a sweep path into nothing",
        files: &[
            ("m.json", Copy(SPHERE)),
            (
                "s.json",
                Text(
                    r#"{"model":"m.json","parameters":[{"path":"layers[3].albedo","values":[0.5]}]}"#,
                ),
            ),
        ],
        args: &["sweep", "s.json", "--dry-run"],
        status: 1,
        needles: &["s.json", "parameters[0].path", "layers[3]"],
    },
    Case {
        name: "a sweep value the model refuses",
        files: &[
            ("m.json", Copy(SPHERE)),
            (
                "s.json",
                Text(
                    r#"{"model":"m.json","parameters":[{"path":"layers[0].albedo","values":[0.5, 2]}]}"#,
                ),
            ),
        ],
        args: &["sweep", "s.json", "--dry-run"],
        status: 1,
        needles: &["s.json", "layers[0].albedo", "2"],
    },
    Case {
        name: "a log range through zero",
        files: &[
            ("m.json", Copy(SPHERE)),
            (
                "s.json",
                Text(
                    r#"{"model":"m.json","parameters":[{"path":"layers[0].albedo","log":{"from":-1,"to":1,"count":3}}]}"#,
                ),
            ),
        ],
        args: &["sweep", "s.json", "--dry-run"],
        status: 1,
        needles: &["s.json", "parameters[0].log.from", "-1"],
    },
    Case {
        name: "both values and a range",
        files: &[
            ("m.json", Copy(SPHERE)),
            (
                "s.json",
                Text(
                    r#"{"model":"m.json","parameters":[{"path":"layers[0].albedo","values":[0.5],"linear":{"from":0.1,"to":0.2,"count":2}}]}"#,
                ),
            ),
        ],
        args: &["sweep", "s.json", "--dry-run"],
        status: 1,
        needles: &["s.json", "parameters[0]", "exactly one of"],
    },
    Case {
        name: "a list for a sweep spec",
        files: &[("s.json", Text("[]"))],
        args: &["sweep", "s.json", "--dry-run"],
        status: 1,
        needles: &["s.json: .: a list: expected a sweep spec, an object"],
    },
    Case {
        name: "a sweep's missing base model",
        files: &[(
            "s.json",
            Text(
                r#"{"model":"absent.json","parameters":[{"path":"layers[0].albedo","values":[0.5]}]}"#,
            ),
        )],
        args: &["sweep", "s.json", "--dry-run"],
        status: 1,
        needles: &["s.json", "base model", "absent.json"],
    },
    // Shard files: tampering is refused with the reason.
    Case {
        name: "a shard whose histogram disagrees with its count",
        files: &[
            (
                "a.json",
                Tampered(RUN_SHARD_1, "/tally/reflected/count", "7"),
            ),
            ("b.json", Copy(RUN_SHARD_2)),
        ],
        args: MERGE,
        status: 1,
        needles: &[
            "a.json",
            "damaged shard file",
            "tally.reflected",
            "expected 7",
        ],
    },
    Case {
        name: "a shard with a histogram bin of 2^63",
        files: &[
            (
                "a.json",
                Tampered(
                    RUN_SHARD_1,
                    "/tally/reflected/time_histogram/bins/0/1",
                    "9223372036854775808",
                ),
            ),
            ("b.json", Copy(RUN_SHARD_2)),
        ],
        args: MERGE,
        status: 1,
        needles: &[
            "a.json",
            "damaged shard file",
            "tally.reflected.time_histogram",
        ],
    },
    Case {
        name: "a shard whose maximum is 1e308",
        files: &[
            (
                "a.json",
                Tampered(RUN_SHARD_1, "/tally/reflected/time_s/max", "1e308"),
            ),
            ("b.json", Copy(RUN_SHARD_2)),
        ],
        args: MERGE,
        status: 1,
        needles: &["a.json", "tally.reflected.time_s.max", "impossible"],
    },
    Case {
        name: "a shard with a changed exact-sum limb",
        files: &[
            (
                "a.json",
                Tampered(
                    RUN_SHARD_1,
                    "/tally/reflected/time_s/sum/limbs/1/1",
                    "4000000000",
                ),
            ),
            ("b.json", Copy(RUN_SHARD_2)),
        ],
        args: MERGE,
        status: 1,
        needles: &["a.json", "tally.reflected.time_s.sum"],
    },
    Case {
        name: "a shard of another model",
        files: &[
            (
                "a.json",
                Tampered(RUN_SHARD_1, "/shard/model/layers/0/thickness", "0.5"),
            ),
            ("b.json", Copy(RUN_SHARD_2)),
        ],
        args: MERGE,
        status: 1,
        needles: &[
            "a.json: damaged shard file: shard: model_hash",
            "does not match the embedded model",
        ],
    },
    Case {
        name: "a shard given twice",
        files: &[("a.json", Copy(RUN_SHARD_1))],
        args: &["merge", "a.json", "a.json"],
        status: 1,
        needles: &["shard 1/2 is given twice (a.json and a.json)"],
    },
    Case {
        name: "a missing shard",
        files: &[("a.json", Copy(RUN_SHARD_1))],
        args: &["merge", "a.json"],
        status: 1,
        needles: &["missing shard(s) 2 of 2"],
    },
    Case {
        name: "a run shard with a sweep shard",
        files: &[
            ("a.json", Copy(RUN_SHARD_1)),
            ("w.json", Copy(SWEEP_SHARD_1)),
        ],
        args: &["merge", "a.json", "w.json"],
        status: 1,
        needles: &["a.json is a shard of a run but w.json is a shard of a sweep"],
    },
    Case {
        name: "JSON that is no shard",
        files: &[("a.json", Copy(SPHERE))],
        args: &["merge", "a.json"],
        status: 1,
        needles: &["a.json: not a shard file"],
    },
    // Checkpoints.
    Case {
        name: "a tampered checkpoint is refused, not resumed",
        files: &[
            ("m.json", Copy(SPHERE)),
            ("run.ckpt", Tampered(CHECKPOINT, "/tally/launched", "29")),
        ],
        args: RESUME,
        status: 1,
        needles: &[
            "run.ckpt: not a usable checkpoint: tally.launched",
            "found 29, expected 30",
        ],
    },
    // Output paths.
    Case {
        name: "two outputs on stdout",
        files: &[],
        args: &["run", "--json", "-", "--report", "-"],
        status: 1,
        needles: &["--json - and --report - would both write to standard output"],
    },
    Case {
        name: "a report into a folder",
        files: &[("out", Folder)],
        args: &["run", "--report", "out"],
        status: 1,
        needles: &["--report", "out: is a directory, not a regular file"],
    },
    // Flags.
    Case {
        name: "zero photons",
        files: &[],
        args: &["run", "--photons", "0"],
        status: 2,
        needles: &["--photons"],
    },
    Case {
        name: "a negative gamma",
        files: &[],
        args: &["run", "--gamma=-1"],
        status: 2,
        needles: &["--gamma"],
    },
    Case {
        name: "shard 3 of 2",
        files: &[],
        args: &["run", "--shard", "3/2", "--json", "x.json"],
        status: 2,
        needles: &["--shard", "3/2"],
    },
];

/// Writes a case's files into `folder`.
fn prepare(case: &Case, folder: &Path) {
    for (name, content) in case.files {
        let path = folder.join(name);
        match content {
            Text(text) => std::fs::write(&path, text).unwrap(),
            Bytes(bytes) => std::fs::write(&path, bytes).unwrap(),
            Copy(source) => {
                std::fs::copy(source, &path).unwrap();
            }
            Tampered(source, pointer, value) => {
                let mut json: Value =
                    serde_json::from_str(&std::fs::read_to_string(source).unwrap()).unwrap();
                *json
                    .pointer_mut(pointer)
                    .unwrap_or_else(|| panic!("{}: no {pointer} in {source}", case.name)) =
                    serde_json::from_str(value).unwrap();
                std::fs::write(&path, serde_json::to_string(&json).unwrap()).unwrap();
            }
            Sparse(bytes) => std::fs::File::create(&path)
                .unwrap()
                .set_len(*bytes)
                .unwrap(),
            Folder => std::fs::create_dir(&path).unwrap(),
        }
    }
    if case.args.contains(&"many-layers.json") {
        let layers = vec![r#"{"thickness":1,"extinction_coefficient":1}"#; 10_001].join(",");
        std::fs::write(
            folder.join("many-layers.json"),
            format!(r#"{{"geometry":"slab","layers":[{layers}]}}"#),
        )
        .unwrap();
    }
}

#[test]
fn catalogue_has_at_least_forty_cases() {
    assert!(CASES.len() >= 40, "{} cases", CASES.len());
}

#[test]
fn every_hostile_input_gets_its_message() {
    let mut wrong = Vec::new();
    for case in CASES {
        // Corpus paths are relative to the crate; the command runs in the case's folder.
        let folder = tempfile::tempdir().unwrap();
        prepare(case, folder.path());
        let output = std::process::Command::new(env!("CARGO_BIN_EXE_sojourn"))
            .args(case.args)
            .current_dir(folder.path())
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&output.stderr).to_string();
        let missing: Vec<&&str> = case
            .needles
            .iter()
            .filter(|needle| !stderr.contains(**needle))
            .collect();
        if output.status.code() != Some(case.status)
            || !missing.is_empty()
            || stderr.contains("panicked")
        {
            wrong.push(format!(
                "{}: status {:?} (expected {}), missing {missing:?}:\n{stderr}",
                case.name,
                output.status.code(),
                case.status
            ));
        }
    }
    assert!(wrong.is_empty(), "{}", wrong.join("\n"));
}
