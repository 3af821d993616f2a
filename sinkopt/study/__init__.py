"""The study file: TOML reader, schema checks and the built-in catalogs (materials, interface
materials, demo fans) shipped as package data."""
