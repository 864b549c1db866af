"""seamtally-det on a pretrained MobileNet V1 backbone (ImageNet weights converted by convert.py): the same
CenterNet-style head and the same output contract as model.SeamtallyDet (heat, size, offset, angle at stride 4).

Input is RGB in 0..1 like SeamtallyDet; the network maps it to the backbone's (q - 128) / 128 range itself.
Inputs are multiples of 32 px, so every feature map a stride-2 layer sees has even sides and TF SAME padding is the
fixed (0, 1) on each axis (1 on both sides for stride 1): StaticSame swaps that in, so the ONNX graph has no
shape-dependent ops."""
import os
import sys

import torch
import torch.nn as nn
import torch.nn.functional as F

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
sys.path.insert(0, os.path.dirname(HERE))
from convert import ConvAct, build, load_converted  # noqa: E402
from model import cbr  # noqa: E402


def _static_forward(self, x):
    if self.k > 1:
        x = F.pad(x, (0, 1, 0, 1) if self.stride == 2 else (1, 1, 1, 1))
    x = self.conv(x)
    return F.relu6(x) if self.relu6 else x


class MobileDet(nn.Module):
    def __init__(self, num_classes=2, alpha=0.25, pretrained=None, neck=(24, 40, 64)):
        super().__init__()
        net = load_converted(pretrained)[0] if pretrained else build("mobilenet_v1", alpha, 1001)
        self.backbone = net.backbone(32)
        for m in self.backbone.modules():
            if isinstance(m, ConvAct):
                m.forward = _static_forward.__get__(m, ConvAct)
        ch = self.backbone.channels
        n4, n8, n16 = neck
        self.lat32 = nn.Conv2d(ch[32], n16, 1)
        self.proj16 = nn.Conv2d(ch[16], n16, 1)
        self.fuse16 = cbr(n16, n16)
        self.lat16 = nn.Conv2d(n16, n8, 1)
        self.proj8 = nn.Conv2d(ch[8], n8, 1)
        self.fuse8 = cbr(n8, n8)
        self.lat8 = nn.Conv2d(n8, n4, 1)
        self.proj4 = nn.Conv2d(ch[4], n4, 1)
        self.fuse4 = cbr(n4, n4)
        self.up = nn.Upsample(scale_factor=2, mode="nearest")
        hc = 32
        self.head = cbr(n4, hc)
        self.hm = nn.Conv2d(hc, num_classes, 1)
        self.reg = nn.Conv2d(hc, 6, 1)
        nn.init.constant_(self.hm.bias, -2.19)
        self.export_mode = False
        self.arch = f"mbv1-{alpha}"

    def forward(self, x):
        f = self.backbone(x * 2.0 - 1.0)
        p16 = self.fuse16(self.up(self.lat32(f[32])) + self.proj16(f[16]))
        p8 = self.fuse8(self.up(self.lat16(p16)) + self.proj8(f[8]))
        p4 = self.fuse4(self.up(self.lat8(p8)) + self.proj4(f[4]))
        h = self.head(p4)
        hm, reg = self.hm(h), self.reg(h)
        if not self.export_mode:
            return hm, reg
        heat = torch.sigmoid(hm)
        size = torch.exp(torch.clamp(reg[:, 0:2], -3.0, 7.0))
        c, s = reg[:, 4:5], reg[:, 5:6]
        angle = torch.atan(s / (torch.sqrt(c * c + s * s) + c + 1e-6))
        return heat, size, reg[:, 2:4], angle
