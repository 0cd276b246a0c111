"""Routes: independent ways to compute observables.  See `registry` and `base`."""
