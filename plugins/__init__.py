"""Built-in swayscreen estimators.

Each module exposes ``PLUGIN``, registered in pyproject.toml under the entry-point
group ``swayscreen.plugins`` exactly as a third-party plugin would be.
"""
