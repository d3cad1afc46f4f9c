"""verify stage of thresholdc."""
