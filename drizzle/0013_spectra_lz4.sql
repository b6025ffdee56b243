-- Spectra are stored with LZ4 instead of the default pglz TOAST compression (PostgreSQL 14+, "ALTER TABLE ... SET
-- COMPRESSION"). Measured on this project's bench (npm run bench identity): inserting the 100 sample spectra of a
-- 100-container run (about 4.4 MB of bytea) took about twice as long with pglz, which saved only about a tenth more space.
-- Only new values are affected; values stored before keep their method and read back the same.
ALTER TABLE "spectra" ALTER COLUMN "original_bytes" SET COMPRESSION lz4, ALTER COLUMN "x" SET COMPRESSION lz4, ALTER COLUMN "y" SET COMPRESSION lz4;
