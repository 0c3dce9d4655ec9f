"""Storage: where files live (resources, the data folder) and how they are written."""
