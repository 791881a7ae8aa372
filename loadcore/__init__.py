"""loadcore: scenario planning for weather-driven daily electricity demand."""

__version__ = "0.1.0"
