"""Pure math: moments (the divergence-theorem sum), mass properties, principal frame, spin,
rotations, plausibility. No files, no text formatting.
"""
