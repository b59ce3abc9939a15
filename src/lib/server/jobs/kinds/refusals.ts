import { ServiceError } from '../../services/errors';
import { JobFailure } from '../registry';

/**
 * Runs service work inside a job: a ServiceError (a refusal a person can act on: bad input, a layer
 * gone, an empty recipe) becomes a JobFailure with its message, failing the job without a retry.
 */
export async function refusalsFail<T>(work: () => Promise<T>): Promise<T> {
	try {
		return await work();
	} catch (e) {
		if (e instanceof ServiceError) throw new JobFailure(e.message);
		throw e;
	}
}
