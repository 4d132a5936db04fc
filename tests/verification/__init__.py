"""Independent verification of ``poser ik`` against a reference written apart from Poser's code."""
