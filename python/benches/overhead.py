"""How much calling cleave from Python adds: the command line's wall time for `cleave derive
MODEL --json -` against `cleave.derive(MODEL)` in-process, and the part of the latter spent
outside the library (reading the file, parsing the JSON, building the result).

Usage, from the repository's root after `cargo build --release` and `pip install ./python`:
    python3 python/benches/overhead.py [target/release/cleave]
"""

import pathlib
import statistics
import subprocess
import sys
import time

import cleave
from cleave import _native

REPO = pathlib.Path(__file__).resolve().parents[2]
SMALL = ["spin_one_axial", "hubbard_dimer", "spin_orbit_field", "qubit_resonator", "two_transmons"]


def median_time(function, repeat=15):
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        function()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def main():
    binary = sys.argv[1] if len(sys.argv) > 1 else str(REPO / "target" / "release" / "cleave")
    print(f"{'example':<18} {'CLI':>9} {'Python':>9} {'library':>9} {'added':>9}")
    for name in SMALL:
        path = str(REPO / "examples" / f"{name}.clv")
        text = pathlib.Path(path).read_text()
        cli = median_time(lambda: subprocess.run([binary, "derive", path, "--json", "-"], capture_output=True, check=True))
        python = median_time(lambda: cleave.derive(path).branches)
        library = median_time(lambda: _native.derive(text, path))
        print(f"{name:<18} {cli * 1e3:8.2f}ms {python * 1e3:8.2f}ms {library * 1e3:8.2f}ms {(python - library) * 1e3:8.2f}ms")


if __name__ == "__main__":
    main()
