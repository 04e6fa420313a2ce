"""Reference check: fulcrum's SHA-256 file digests vs Python's hashlib.
Usage: check_sha256.py LIST   (lines "path hexdigest")."""
import hashlib
import sys

bad = 0
for line in open(sys.argv[1]):
    path, digest = line.split()
    want = hashlib.sha256(open(path, "rb").read()).hexdigest()
    if want != digest:
        print("mismatch", path, digest, want)
        bad += 1
print("sha256 files checked, mismatches:", bad)
sys.exit(1 if bad else 0)
