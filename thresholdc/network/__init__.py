"""The Network model, its file format, layering and activations."""

from .fileformat import check_network, dumps, load, loads, save
from .model import Network, Neuron, Output

__all__ = ["Network", "Neuron", "Output", "check_network", "dumps", "load", "loads", "save"]
