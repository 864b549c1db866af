"""Split the real roof crops (roofs-pv-registry, 0.2 m, EPSG:2056) into training and validation by 2 km blocks of
their LV95 centre, so no two crops of one neighbourhood fall on both sides; then pick, with a fixed seed, the crops
to hand-label on each side. Usage: python3 roof_split.py REALDATA OUT.json [N_VAL N_TRAIN]"""
import glob
import json
import os
import sys
import zlib

import numpy as np


def block_of(name):
    e, n = (int(v) for v in os.path.basename(name)[6:-4].split("_"))
    return e // 2000, n // 2000


def is_val(name):
    """A crop is validation when its 2 km block's CRC32 falls in the lowest third (stable across machines)."""
    b = block_of(name)
    return zlib.crc32(f"{b[0]}_{b[1]}".encode()) % 3 == 0


def main():
    real, out = sys.argv[1], sys.argv[2]
    n_val, n_train = (int(sys.argv[3]), int(sys.argv[4])) if len(sys.argv) > 4 else (200, 200)
    names = sorted(os.path.basename(p) for p in glob.glob(os.path.join(real, "roofs-pv-registry", "crops", "*.png")))
    val = [n for n in names if is_val(n)]
    train = [n for n in names if not is_val(n)]
    rng = np.random.default_rng(20261205)
    pick = lambda lst, k: sorted(rng.permutation(lst)[:k].tolist())  # noqa: E731
    json.dump({"rule": "2 km blocks of the LV95 centre, CRC32 % 3 == 0 -> validation",
               "valAll": len(val), "trainAll": len(train),
               "valLabel": pick(val, n_val), "trainLabel": pick(train, n_train)}, open(out, "w"), indent=1)
    print(f"validation crops {len(val)}, training crops {len(train)}")


if __name__ == "__main__":
    main()
