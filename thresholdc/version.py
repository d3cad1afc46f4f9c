"""The package version (one place; read by the package and by the ONNX exporter)."""

__version__ = "0.1.0"
