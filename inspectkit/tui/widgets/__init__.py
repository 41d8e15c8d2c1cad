"""Small reusable widgets and the cell renderings they share."""
