export * from './object-store';
export { FsObjectStore } from './fs-store';
export { S3ObjectStore, type S3StoreConfig } from './s3-store';
export { createObjectStore, StorageConfigError, DEFAULT_STORAGE_DIR, type StorageEnv } from './create-object-store';
