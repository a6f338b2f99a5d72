// Personal settings: each section loads and acts through its own module.
import { apiTokenActions, loadApiTokens } from './api-tokens.server';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => ({ apiTokens: await loadApiTokens(event) });

export const actions: Actions = { ...apiTokenActions };
