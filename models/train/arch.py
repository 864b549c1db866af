"""The detector architectures a checkpoint can hold: 'plain' (model.SeamtallyDet, the shipped one) and 'mbv1-ALPHA'
(mobilenet/det.MobileDet on an ImageNet MobileNet V1 converted by mobilenet/convert.py). Checkpoints record theirs."""
import os
import sys

import torch

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
from model import SeamtallyDet  # noqa: E402


def make_model(arch="plain", pretrained=None):
    if arch == "plain":
        return SeamtallyDet()
    if arch.startswith("mbv1-"):
        sys.path.insert(0, os.path.join(HERE, "mobilenet"))
        from det import MobileDet
        return MobileDet(alpha=float(arch[5:]), pretrained=pretrained)
    raise ValueError(f"unknown architecture {arch!r}: use plain or mbv1-0.25")


def load_checkpoint(path):
    """The model of a training checkpoint (architecture from the checkpoint; older ones are 'plain')."""
    ck = torch.load(path)
    model = make_model(ck.get("arch", "plain"))
    model.load_state_dict(ck["model"])
    return model
