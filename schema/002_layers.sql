-- 002_layers.sql: register the localities point layer in the GeoPackage
-- catalogue (Requirements 18, 21-27) and the R-tree-free spatial extent.
-- The EPSG:4326 row of gpkg_spatial_ref_sys is inserted by the library
-- before this file runs, with the definition text taken from PROJ.
INSERT INTO gpkg_contents (table_name, data_type, identifier, description, srs_id)
VALUES ('localities', 'features', 'localities',
        'Fossil localities (WGS 84); one point per named locality', 4326);
INSERT INTO gpkg_geometry_columns (table_name, column_name, geometry_type_name, srs_id, z, m)
VALUES ('localities', 'geom', 'POINT', 4326, 0, 0);
