export { InputError, isInputError, formatError } from './input-error';
