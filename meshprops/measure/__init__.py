"""Measuring: the options, one body, the assembly manifest, assemblies and their overlaps."""
