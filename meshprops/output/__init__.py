"""Output: one serializer (results -> plain dicts) and the renderers chosen by name."""
