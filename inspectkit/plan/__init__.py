"""Planning the next round of visits: what is due, in what order, on which day."""
