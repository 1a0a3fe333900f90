import { readReset } from '../../../services/password-resets'

export default defineEventHandler(async (event) => readReset(useDb(), getRouterParam(event, 'token') ?? ''))
