//! Writers: PNG (1-bit with pHYs), PDF (exact page size), manifest JSON.
