"""train stage of thresholdc."""
