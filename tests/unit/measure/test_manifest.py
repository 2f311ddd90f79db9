import re

"""Every manifest error: a ManifestError (also a ValueError) naming the manifest, the key and the
line; through the CLI one line on stderr, exit code 2, nothing on stdout, no traceback."""

import pytest
from typer.testing import CliRunner

from meshprops.cli import app
from meshprops.errors import EXIT_USAGE, InputValueError, ManifestError, MeshpropsError
from meshprops.geometry import shapes
from meshprops.io.writers import write_binary_stl
from meshprops.measure.assembly import measure_manifest
from meshprops.measure.manifest import load_manifest

GOOD_BODY = '[[body]]\nname = "cube"\nmesh = "cube.stl"\ndensity = 1000\n'

# (case id, manifest text, expected key, expected line, words the message must contain)
CASES = [
    ("toml_syntax", '[[body]]\nname = "cube"\nmesh = cube.stl\n', None, 3, "TOML syntax error"),
    ("unknown_top_table", GOOD_BODY + "[bodies]\nx = 1\n", "bodies", 5, "unknown key 'bodies'"),
    ("unknown_assembly_key", '[assembly]\nname = "a"\nunits = "mm"\n' + GOOD_BODY, "assembly.units", 3, "unknown key"),
    ("unknown_body_key", GOOD_BODY + 'colour = "red"\n', "body[0].colour", 5, "unknown key 'colour'"),
    ("unknown_key_second_body", GOOD_BODY + '[[body]]\nname = "b"\nmesh = "cube.stl"\ndensity = 1\nmas = 2\n',
     "body[1].mas", 9, "unknown key 'mas'"),
    ("missing_mesh_file", '[[body]]\nname = "cube"\nmesh = "nowhere.stl"\ndensity = 1000\n', "body[0].mesh", 3,
     "mesh file not found"),
    ("missing_name", '[[body]]\nmesh = "cube.stl"\ndensity = 1000\n', "body[0]", 1, "missing key 'name'"),
    ("missing_mesh_key", '[[body]]\nname = "cube"\ndensity = 1000\n', "body[0]", 1, "missing key 'mesh'"),
    ("no_density_at_all", '[[body]]\nname = "cube"\nmesh = "cube.stl"\n', "body[0]", 1,
     "give material, density or measured_mass"),
    ("material_and_density", GOOD_BODY + 'material = "pla"\n', "body[0].density", 4, "not both"),
    ("density_and_measured_mass", GOOD_BODY + "measured_mass = 0.1\n", "body[0].measured_mass", 5, "do not also give"),
    ("unknown_material", '[[body]]\nname = "cube"\nmesh = "cube.stl"\nmaterial = "aluminum_6061"\n',
     "body[0].material", 4, "aluminium_6061"),
    ("negative_density", '[[body]]\nname = "cube"\nmesh = "cube.stl"\ndensity = -5\n', "body[0].density", 4, "> 0"),
    ("density_as_text", '[[body]]\nname = "cube"\nmesh = "cube.stl"\ndensity = "2700"\n', "body[0].density", 4,
     "a string"),
    ("density_as_boolean", '[[body]]\nname = "cube"\nmesh = "cube.stl"\ndensity = true\n', "body[0].density", 4,
     "a boolean"),
    ("zero_measured_mass", '[[body]]\nname = "cube"\nmesh = "cube.stl"\nmaterial = "pla"\nmeasured_mass = 0\n',
     "body[0].measured_mass", 5, "> 0"),
    ("infinite_density", '[[body]]\nname = "cube"\nmesh = "cube.stl"\ndensity = inf\n', "body[0].density", 4, "finite"),
    ("bad_assembly_unit", '[assembly]\nlength_unit = "mils"\n' + GOOD_BODY, "assembly.length_unit", 2,
     "unknown length unit 'mils'"),
    ("bad_body_unit", GOOD_BODY + 'length_unit = "furlong"\n', "body[0].length_unit", 5, "unknown length unit"),
    ("translation_too_short", GOOD_BODY + "translation = [1, 2]\n", "body[0].translation", 5, "3 numbers"),
    ("translation_not_numbers", GOOD_BODY + 'translation = [1, "x", 3]\n', "body[0].translation", 5, "numbers"),
    ("two_rotation_forms", GOOD_BODY + "rotation_rpy_deg = [0, 0, 90]\nrotation_matrix = [[1,0,0],[0,1,0],[0,0,1]]\n",
     "body[0].rotation_rpy_deg", 5, "one rotation form"),
    ("axis_without_angle", GOOD_BODY + "rotation_axis = [0, 0, 1]\n", "body[0]", 1, "rotation_angle_deg is missing"),
    ("angle_without_axis", GOOD_BODY + "rotation_angle_deg = 30\n", "body[0]", 1, "rotation_axis is missing"),
    ("zero_axis", GOOD_BODY + "rotation_axis = [0, 0, 0]\nrotation_angle_deg = 30\n", "body[0].rotation_axis", 5,
     "non-zero axis"),
    ("matrix_not_orthonormal", GOOD_BODY + "rotation_matrix = [[1, 0.2, 0], [0, 1, 0], [0, 0, 1]]\n",
     "body[0].rotation_matrix", 5, "not orthonormal"),
    ("matrix_reflection", GOOD_BODY + "rotation_matrix = [[1, 0, 0], [0, 1, 0], [0, 0, -1]]\n",
     "body[0].rotation_matrix", 5, "reflection"),
    ("matrix_wrong_shape", GOOD_BODY + "rotation_matrix = [[1, 0], [0, 1]]\n", "body[0].rotation_matrix", 5, "3x3"),
    ("rpy_wrong_length", GOOD_BODY + "rotation_rpy_deg = [0, 90]\n", "body[0].rotation_rpy_deg", 5, "roll, pitch, yaw"),
    ("duplicate_name", GOOD_BODY + GOOD_BODY, "body[1].name", 6, "duplicate name 'cube'"),
    ("reserved_name", '[[body]]\nname = "total"\nmesh = "cube.stl"\ndensity = 1000\n', "body[0].name", 2, "reserved"),
    ("bad_name", '[[body]]\nname = "front wheel"\nmesh = "cube.stl"\ndensity = 1000\n', "body[0].name", 2,
     "expected a name"),
    ("point_mass_negative", GOOD_BODY + '[[point_mass]]\nname = "bat"\nmass = -1\nposition = [0, 0, 0]\n',
     "point_mass[0].mass", 7, "> 0"),
    ("point_mass_no_position", GOOD_BODY + '[[point_mass]]\nname = "bat"\nmass = 1\n', "point_mass[0]", 5,
     "missing key 'position'"),
    ("point_mass_unknown_key", GOOD_BODY + '[[point_mass]]\nname = "bat"\nmass = 1\nposition = [0,0,0]\nweight = 2\n',
     "point_mass[0].weight", 9, "unknown key 'weight'"),
    ("point_mass_asymmetric_inertia",
     GOOD_BODY + '[[point_mass]]\nname = "b"\nmass = 1\nposition = [0,0,0]\ninertia = [[1,0.5,0],[0,1,0],[0,0,1]]\n',
     "point_mass[0].inertia", 9, "symmetric"),
    ("point_mass_unphysical_inertia",
     GOOD_BODY + '[[point_mass]]\nname = "b"\nmass = 1\nposition = [0,0,0]\ninertia = [[1,0,0],[0,1,0],[0,0,3]]\n',
     "point_mass[0].inertia", 9, "triangle inequality"),
    ("point_mass_bad_box", GOOD_BODY + '[[point_mass]]\nname = "b"\nmass = 1\nposition = [0,0,0]\nbox_size = [1, 0, 2]\n',
     "point_mass[0].box_size", 9, "> 0"),
    ("point_name_clash", GOOD_BODY + '[[point_mass]]\nname = "cube"\nmass = 1\nposition = [0,0,0]\n',
     "point_mass[0].name", 6, "duplicate name"),
    ("bad_point", GOOD_BODY + "[points]\nmast = [1, 2]\n", "points.mast", 6, "3 numbers"),
    ("bad_frame_key", GOOD_BODY + "[frames]\nimu = { origin = [0,0,0], tilt = 3 }\n", "frames.imu.tilt", 6, "unknown key"),
    ("bad_frame_rotation", GOOD_BODY + "[frames]\n[frames.imu]\nrotation_matrix = [[2,0,0],[0,1,0],[0,0,1]]\n",
     "frames.imu.rotation_matrix", 7, "not orthonormal"),
    ("bad_user_material", GOOD_BODY + "[materials]\nfoam = { density = -30 }\n", "materials.foam.density", 6, "> 0"),
    ("user_material_without_density", GOOD_BODY + '[materials]\nfoam = { source = "x" }\n', "materials.foam", 6,
     "missing key 'density'"),
    ("body_not_array", '[body]\nname = "cube"\n', "body", 1, "array of tables"),
    ("no_bodies", '[assembly]\nname = "empty"\n', None, None, "no [[body]] and no [[point_mass]]"),
    ("wrong_version", "[assembly]\nmanifest_version = 2\n" + GOOD_BODY, "assembly.manifest_version", 2, "expected 1"),
    ("malformed_mesh", '[[body]]\nname = "junk"\nmesh = "junk.stl"\ndensity = 1000\n', "body[0].mesh", 3,
     "cannot load mesh"),
]

def versioned(text: str) -> str:
    """The manifest ``text`` with ``manifest_version = 1`` (required) added, every other line where it was."""
    if "manifest_version" in text:
        return text
    if "[assembly]" not in text:
        return text + "\n[assembly]\nmanifest_version = 1\n"
    head, tail = text.split("[assembly]\n", 1)
    block = re.match(r"(?:[^\[\n][^\n]*\n|\n(?!\[))*", tail).end()
    return head + "[assembly]\n" + tail[:block] + "manifest_version = 1\n" + tail[block:]



@pytest.fixture
def folder(tmp_path):
    write_binary_stl(tmp_path / "cube.stl", shapes.triangles_of(*shapes.box((10.0, 10.0, 10.0))))
    (tmp_path / "junk.stl").write_bytes(b"this is not a mesh at all\n" * 3)
    return tmp_path


@pytest.mark.parametrize("case, text, key, line, words", [(c[0], versioned(c[1]), *c[2:]) for c in CASES],
                         ids=[c[0] for c in CASES])
def test_manifest_error_names_file_key_and_line(folder, case, text, key, line, words):
    path = folder / f"{case}.toml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(ManifestError) as caught:
        measure_manifest(path, overlap_samples=0)
    error = caught.value
    assert isinstance(error, MeshpropsError) and isinstance(error, ValueError)
    assert error.manifest == str(path) and error.key == key and error.line == line
    message = str(error)
    assert message.startswith(f"{path}: ") and words in message
    if line is not None:
        assert f"line {line}: " in message
    if key is not None:
        assert f"{key}: " in message


@pytest.mark.parametrize("case", ["unknown_body_key", "missing_mesh_file", "toml_syntax", "malformed_mesh"])
def test_cli_prints_one_line_and_exits_2(folder, case):
    text = versioned(dict((c[0], c[1]) for c in CASES)[case])
    path = folder / f"{case}.toml"
    path.write_text(text)
    out = CliRunner().invoke(app, ["measure", str(path), "--json"])
    assert out.exit_code == EXIT_USAGE
    assert out.stdout == ""
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("meshprops: error: ") and str(path) in lines[0]
    assert "Traceback" not in out.output


def test_unreadable_manifests(tmp_path):
    with pytest.raises(ManifestError, match="no such manifest file"):
        load_manifest(tmp_path / "absent.toml")
    (tmp_path / "latin1.toml").write_bytes('[assembly]\nname = "caf\xe9"\n'.encode("latin-1"))
    with pytest.raises(ManifestError, match="not UTF-8"):
        load_manifest(tmp_path / "latin1.toml")
    with pytest.raises(ManifestError, match="is a directory"):
        load_manifest(tmp_path)


def test_cli_usage_errors_with_a_manifest(folder):
    path = folder / "ok.toml"
    path.write_text(versioned(GOOD_BODY + "[points]\nmast = [0, 0, 5]\n"))
    runner = CliRunner()
    for arguments, words in (
        (["--units", "cm"], "no --units with a manifest"),
        (["--density", "2700"], "no --density with a manifest"),
        (["--about", "nowhere"], "a named point (mast)"),
        (["--format", "pdf"], "--format: expected one of table, json"),
        (["--json", "--format", "urdf"], "either --json or --format"),
        (["--overlap-samples", "-3"], "a whole number >= 0"),
        (["--format", "urdf", "--inertial-form", "diag"], "--inertial-form: expected one of full, principal"),
    ):
        out = runner.invoke(app, ["measure", str(path), *arguments])
        assert out.exit_code == EXIT_USAGE, (arguments, out.output)
        assert words in out.stderr and out.stdout == "", (arguments, out.stderr)
    out = runner.invoke(app, ["measure", str(path), str(folder / "cube.stl")])
    assert out.exit_code == EXIT_USAGE and "one assembly manifest alone" in out.stderr
    out = runner.invoke(app, ["measure", str(path), "--about", "mast", "--json"])
    assert out.exit_code == 0
    out = runner.invoke(app, ["measure", str(path), "--about", "0,0,5", "--json"])
    assert out.exit_code == 0


def test_about_point_errors_are_input_value_errors(folder):
    path = folder / "ok.toml"
    path.write_text(versioned(GOOD_BODY))
    with pytest.raises(InputValueError):
        measure_manifest(path, about="1,2")
