"""Reading and writing attitude tables and layers."""
