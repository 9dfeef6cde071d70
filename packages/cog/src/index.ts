export { encodeCog, type CogOptions, type CogCrs } from './cog';
