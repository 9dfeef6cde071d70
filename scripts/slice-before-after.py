#!/usr/bin/python3
# Usage: /usr/bin/python3 scripts/slice-before-after.py <before/slices.tif> <after/slices.tif> <band> <out.png>
# Before/after slice image: one band of two slices.tif side by side, amplitude (sqrt of the slice's mean
# square envelope), one grey scale for both (0 to the 99th percentile of the before band), nodata black.
import sys
import numpy as np
from osgeo import gdal
before, after, band, out = sys.argv[1], sys.argv[2], int(sys.argv[3]), sys.argv[4]
def read(p):
    ds = gdal.Open(p)
    b = ds.GetRasterBand(band)
    a = b.ReadAsArray().astype(np.float64)
    nd = b.GetNoDataValue()
    m = (a == nd) | ~np.isfinite(a) if nd is not None else ~np.isfinite(a)
    return np.sqrt(np.clip(a, 0, None)), m
a, ma = read(before)
b, mb = read(after)
hi = np.percentile(a[~ma], 99)
def grey(x, m):
    g = np.clip(x / hi, 0, 1) * 255
    g[m] = 0
    return g.astype(np.uint8)
gap = np.full((a.shape[0], 4), 255, np.uint8)
img = np.hstack([grey(a, ma), gap, grey(b, mb)])
k = 3
img = np.kron(img, np.ones((k, k), np.uint8))
drv = gdal.GetDriverByName('MEM').Create('', img.shape[1], img.shape[0], 1, gdal.GDT_Byte)
drv.GetRasterBand(1).WriteArray(img)
gdal.GetDriverByName('PNG').CreateCopy(out, drv)
print(out, img.shape, 'scale max', hi)
