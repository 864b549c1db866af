"""seamtally-det network: a CenterNet-style ("Objects as Points", Zhou et al. 2019) heatmap head on a small
plain-conv backbone with a nearest-upsampling top-down path, output stride 4. Only Conv/Relu/Resize(nearest)/Add/
Sigmoid/Exp and a few element-wise ops for the angle, so onnxruntime-web's wasm kernels run it well."""
import torch
import torch.nn as nn

STRIDE = 4
CLASSES = ["vehicle", "solar_panel"]


def cbr(cin, cout, stride=1, dilation=1):
    """3x3 conv + BatchNorm + ReLU (BatchNorm folds into the conv at ONNX export)."""
    return nn.Sequential(
        nn.Conv2d(cin, cout, 3, stride=stride, padding=dilation, dilation=dilation, bias=False),
        nn.BatchNorm2d(cout),
        nn.ReLU(inplace=True),
    )


class SeamtallyDet(nn.Module):
    """Input [N,3,H,W] RGB in 0..1 (H, W multiples of 32). Training forward returns raw maps; export forward
    returns (heatmap sigmoid [N,C,H/4,W/4], size [N,2,..] = (length, width) in input px, offset [N,2,..] in cells,
    angle [N,1,..] = direction of the length axis in radians, pixel frame, y down)."""

    def __init__(self, num_classes=len(CLASSES), w=(16, 24, 40, 64, 96)):
        super().__init__()
        c1, c4, c8, c16, c32 = w
        self.stem = cbr(3, c1, 2)                      # /2
        self.s4 = nn.Sequential(cbr(c1, c4, 2), cbr(c4, c4))          # /4
        self.s8 = nn.Sequential(cbr(c4, c8, 2), cbr(c8, c8))          # /8
        self.s16 = nn.Sequential(cbr(c8, c16, 2), cbr(c16, c16))      # /16
        self.s32 = nn.Sequential(cbr(c16, c32, 2), cbr(c32, c32), cbr(c32, c32, dilation=2))  # /32, wide context
        self.lat32 = nn.Conv2d(c32, c16, 1)
        self.fuse16 = cbr(c16, c16)
        self.lat16 = nn.Conv2d(c16, c8, 1)
        self.fuse8 = cbr(c8, c8)
        self.lat8 = nn.Conv2d(c8, c4, 1)
        self.fuse4 = cbr(c4, c4)
        self.up = nn.Upsample(scale_factor=2, mode="nearest")
        hc = 32
        self.head = cbr(c4, hc)
        self.hm = nn.Conv2d(hc, num_classes, 1)
        self.reg = nn.Conv2d(hc, 6, 1)  # log length, log width, offset x, offset y, cos 2a, sin 2a
        nn.init.constant_(self.hm.bias, -2.19)  # prior 0.1 as in CenterNet
        self.export_mode = False

    def forward(self, x):
        x = self.stem(x)
        f4 = self.s4(x)
        f8 = self.s8(f4)
        f16 = self.s16(f8)
        f32 = self.s32(f16)
        p16 = self.fuse16(self.up(self.lat32(f32)) + f16)
        p8 = self.fuse8(self.up(self.lat16(p16)) + f8)
        p4 = self.fuse4(self.up(self.lat8(p8)) + f4)
        h = self.head(p4)
        hm = self.hm(h)
        reg = self.reg(h)
        if not self.export_mode:
            return hm, reg
        heat = torch.sigmoid(hm)
        size = torch.exp(torch.clamp(reg[:, 0:2], -3.0, 7.0))
        offset = reg[:, 2:4]
        c, s = reg[:, 4:5], reg[:, 5:6]
        # half of atan2(s, c) via the half-angle identity: atan2(y,x)/2 = atan(y / (sqrt(x^2+y^2) + x))
        angle = torch.atan(s / (torch.sqrt(c * c + s * s) + c + 1e-6))
        return heat, size, offset, angle


def count_macs(model, h=512, w=512):
    """Multiply-accumulates of every Conv2d for one h x w input (element-wise ops are negligible)."""
    macs = [0]

    def hook(mod, inp, out):
        k = mod.kernel_size[0] * mod.kernel_size[1] * (mod.in_channels // mod.groups)
        macs[0] += out.numel() // out.shape[0] * k

    hs = [m.register_forward_hook(hook) for m in model.modules() if isinstance(m, nn.Conv2d)]
    with torch.no_grad():
        model.eval()
        model(torch.zeros(1, 3, h, w))
    for x in hs:
        x.remove()
    return macs[0]


if __name__ == "__main__":
    m = SeamtallyDet()
    n = sum(p.numel() for p in m.parameters())
    macs = count_macs(m)
    print(f"params {n} ({n*4/1e6:.2f} MB fp32), MAC per 512^2 {macs/1e9:.3f} G, FLOP {2*macs/1e9:.3f} G")
