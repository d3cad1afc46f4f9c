"""syntax stage of thresholdc."""
