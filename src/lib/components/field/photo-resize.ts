/**
 * Resizing a camera photo on the phone before it is sent: the longest side is brought down to
 * PHOTO_LONGEST_SIDE pixels (never up), and the image is re-encoded as JPEG. Re-encoding through a
 * canvas also drops the camera's metadata (EXIF, with its GPS tags and device details).
 */
export const PHOTO_LONGEST_SIDE = 1600;
export const PHOTO_JPEG_QUALITY = 0.85;

/** The size that fits `width` × `height` within `longest` on its longest side, keeping the aspect ratio; whole pixels, at least 1. */
export function fitWithin(width: number, height: number, longest = PHOTO_LONGEST_SIDE): { width: number; height: number } {
	if (!(width > 0 && height > 0)) throw new RangeError(`invalid image size ${width} × ${height}`);
	const scale = Math.min(1, longest / Math.max(width, height));
	return { width: Math.max(1, Math.round(width * scale)), height: Math.max(1, Math.round(height * scale)) };
}

/**
 * The photo as a resized JPEG (in the browser). createImageBitmap applies the photo's EXIF
 * orientation, so portrait photos stay upright.
 */
export async function resizePhoto(file: Blob, longest = PHOTO_LONGEST_SIDE, quality = PHOTO_JPEG_QUALITY): Promise<Blob> {
	const bitmap = await createImageBitmap(file, { imageOrientation: 'from-image' });
	try {
		const size = fitWithin(bitmap.width, bitmap.height, longest);
		const canvas = document.createElement('canvas');
		canvas.width = size.width;
		canvas.height = size.height;
		const ctx = canvas.getContext('2d');
		if (!ctx) throw new Error('This browser cannot resize the photo.');
		ctx.drawImage(bitmap, 0, 0, size.width, size.height);
		return await new Promise<Blob>((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('The photo could not be encoded.'))), 'image/jpeg', quality));
	} finally {
		bitmap.close();
	}
}
