"""export stage of thresholdc."""
