import { applyAction, deserialize } from '$app/forms';
import { invalidateAll } from '$app/navigation';

/**
 * Post the upload form to its action with XMLHttpRequest rather than `use:enhance`, because
 * only XHR reports upload progress, and spectra from a line camera can be many MiB. The answer
 * is handled as `use:enhance` would: failures update `form`, a redirect navigates.
 */
export function postWithProgress(
	form: HTMLFormElement,
	data: FormData,
	onProgress: (sent: number, total: number) => void
): Promise<void> {
	return new Promise((resolve) => {
		const xhr = new XMLHttpRequest();
		xhr.open('POST', form.action);
		xhr.setRequestHeader('accept', 'application/json');
		xhr.setRequestHeader('x-sveltekit-action', 'true');
		xhr.upload.onprogress = (e) => onProgress(e.loaded, e.lengthComputable ? e.total : 0);
		const answer = async (result: Parameters<typeof applyAction>[0]) => {
			if (result.type === 'success') await invalidateAll();
			await applyAction(result);
			resolve();
		};
		const failed = (message: string) =>
			answer({ type: 'failure', status: xhr.status || 0, data: { errors: {}, problem: message } });
		xhr.onload = () => {
			try {
				void answer(deserialize(xhr.responseText));
			} catch {
				// Not an action answer: a proxy or the server's body limit refused the request.
				void failed(
					xhr.status === 413
						? 'The server refused a request this large. Crop the windows to the band regions, or upload large files through the API.'
						: `The server answered ${xhr.status}; nothing was stored. Try again in a moment.`
				);
			}
		};
		xhr.onerror = () =>
			void failed('The upload was interrupted (network). Nothing was stored; try again.');
		xhr.send(data);
	});
}
