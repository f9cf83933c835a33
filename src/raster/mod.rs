//! Band rasterizer of the normalized layer image into 1-bit device bitmaps, and exact
//! Euclidean morphology (edge offset).
