"""Write N noise realisations of one preset of the independent generator
(mockgen.py, this folder) in one process: DIR/<preset>-<seed>/ for seeds
first..first+N-1. Used by the coverage test (tests/robustness/
test_split_coverage.cpp); prints the folders, one per line.

usage: python3 make_mock_set.py PRESET FIRST_SEED N DIR"""
import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import mockgen  # noqa: E402

preset, first, n, out = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), sys.argv[4]
for seed in range(first, first + n):
    d = os.path.join(out, f"{preset}-{seed}")
    mockgen.generate(preset, seed=seed, out_dir=d)
    print(d)
