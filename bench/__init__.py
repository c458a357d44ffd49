"""Benchmarks: accuracy on simulated and real recordings, speed. Run each as ``python -m bench.NAME``."""
