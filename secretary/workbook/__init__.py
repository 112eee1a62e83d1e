"""Reading and writing the league's workbook: the only package that imports openpyxl."""
