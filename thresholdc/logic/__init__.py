"""logic stage of thresholdc."""
