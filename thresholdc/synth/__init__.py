"""synth stage of thresholdc."""
