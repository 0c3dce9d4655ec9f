"""Parts: the drawer and its CSV file, standard values, and networks of stock parts."""
